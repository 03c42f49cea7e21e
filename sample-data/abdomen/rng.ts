/**
 * The generator's own seeded pseudo-random numbers, so that a seed gives the same volume on any
 * machine: xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom number generators",
 * ACM TOMS 2021) on 32-bit integer arithmetic, its state filled from the seed by the MurmurHash3
 * 32-bit finaliser over a Weyl sequence (a "splitmix32"). Integer operations and additions only:
 * no Math.random, and no transcendental functions whose last bit could differ between engines.
 */
export class SeededRandom {
  private readonly state = new Uint32Array(4);

  /** `seed`: any integer; only its low 32 bits count. */
  constructor(seed: number) {
    let weyl = seed >>> 0;
    for (let index = 0; index < 4; index++) {
      weyl = (weyl + 0x9e3779b9) >>> 0;
      let mixed = weyl;
      mixed = Math.imul(mixed ^ (mixed >>> 16), 0x85ebca6b);
      mixed = Math.imul(mixed ^ (mixed >>> 13), 0xc2b2ae35);
      this.state[index] = (mixed ^ (mixed >>> 16)) >>> 0;
    }
    // xoshiro must not start from the all-zero state, which it never leaves.
    if (this.state.every((word) => word === 0)) this.state[0] = 1;
  }

  /** The next 32-bit unsigned integer. */
  nextUint32(): number {
    const state = this.state;
    const result = Math.imul(rotateLeft(Math.imul(state[1], 5), 7), 9) >>> 0;
    const shifted = state[1] << 9;
    state[2] ^= state[0];
    state[3] ^= state[1];
    state[1] ^= state[2];
    state[0] ^= state[3];
    state[2] ^= shifted;
    state[3] = rotateLeft(state[3], 11);
    return result;
  }

  /** Uniform in [0, 1), in steps of 2⁻³². */
  nextUnit(): number {
    return this.nextUint32() / 4294967296;
  }

  /**
   * A Gaussian-like deviate of mean 0 and standard deviation 1: the Irwin–Hall sum of four
   * uniforms, centred and scaled by √3 (the sum's variance is 4/12). Bounded at ±2√3 ≈ ±3.46.
   */
  nextGaussianLike(): number {
    const sum = this.nextUnit() + this.nextUnit() + this.nextUnit() + this.nextUnit();
    return (sum - 2) * SQRT_3;
  }
}

const SQRT_3 = Math.sqrt(3);

function rotateLeft(value: number, bits: number): number {
  return ((value << bits) | (value >>> (32 - bits))) >>> 0;
}
