import { describe, expect, it } from 'vitest';
import { determinant3, rotationOfDeformation } from './polar-decomposition';
import { multiply3, rotationMatrix, seededRandom, transpose3 } from './testing/dense';

/** Largest |a − b| over the entries. */
function maxDifference(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let worst = 0;
  for (let index = 0; index < a.length; index++) {
    worst = Math.max(worst, Math.abs(a[index] - b[index]));
  }
  return worst;
}

const IDENTITY = Float64Array.from([1, 0, 0, 0, 1, 0, 0, 0, 1]);

/** Symmetric positive definite stretch S = Q·diag(s)·Qᵀ. */
function stretch(q: Float64Array, s: readonly number[]): Float64Array {
  const d = Float64Array.from([s[0], 0, 0, 0, s[1], 0, 0, 0, s[2]]);
  return multiply3(multiply3(q, d), transpose3(q));
}

describe('rotation of a deformation gradient', () => {
  // Polar decomposition F = R·S, R orthogonal with det +1 and S symmetric positive definite,
  // is unique for det F > 0 (Higham, SIAM J Sci Stat Comput 1986;7:1160).
  it('recovers R from F = R·S built with a known rotation and stretch (Higham path)', () => {
    const random = seededRandom(7);
    for (let trial = 0; trial < 200; trial++) {
      const axis = [random() - 0.5, random() - 0.5, random() - 0.5];
      const rotation = rotationMatrix(axis, 2 * Math.PI * random());
      const frame = rotationMatrix([random(), random() - 0.5, 1], random() * 3);
      const s = stretch(frame, [0.3 + 2 * random(), 0.3 + 2 * random(), 0.3 + 2 * random()]);
      const f = multiply3(rotation, s);
      const r = new Float64Array(9);
      expect(rotationOfDeformation(f, r)).toBe('higham');
      expect(maxDifference(r, rotation)).toBeLessThan(1e-12);
    }
  });

  it('gives the same rotation by the SVD route (Irving, Teran & Fedkiw, SCA 2004)', () => {
    const random = seededRandom(11);
    for (let trial = 0; trial < 100; trial++) {
      const rotation = rotationMatrix([random(), random(), random() - 0.5], 6 * random());
      const s = stretch(rotationMatrix([1, random(), 0], random()), [
        1e-5 + random() * 1e-5,
        0.5 + random(),
        1 + random(),
      ]);
      const f = multiply3(rotation, s);
      const r = new Float64Array(9);
      // A near-flat element (σ ~ 1e-5 against 1): det F is under the Higham threshold.
      expect(rotationOfDeformation(f, r)).toBe('svd');
      expect(maxDifference(r, rotation)).toBeLessThan(1e-9);
    }
  });

  it('returns a proper rotation (det +1, not a reflection) for an inverted element', () => {
    const random = seededRandom(5);
    for (let trial = 0; trial < 100; trial++) {
      const rotation = rotationMatrix([random(), 1, random()], 6 * random());
      const frame = rotationMatrix([random(), random(), 1], 3 * random());
      // Irving et al.: an inverted element is F = R·S with the smallest stretch negative.
      const s = stretch(frame, [1.2, 0.9, -0.2]);
      const f = multiply3(rotation, s);
      expect(determinant3(f)).toBeLessThan(0);
      const r = new Float64Array(9);
      expect(rotationOfDeformation(f, r)).toBe('svd');
      expect(determinant3(r)).toBeCloseTo(1, 12);
      expect(maxDifference(multiply3(transpose3(r), r), IDENTITY)).toBeLessThan(1e-12);
      expect(maxDifference(r, rotation)).toBeLessThan(1e-10);
    }
  });

  it('is the identity for F = I and for F = 0, and a rotation for a flattened element', () => {
    const r = new Float64Array(9);
    rotationOfDeformation(IDENTITY, r);
    expect(Array.from(r)).toEqual(Array.from(IDENTITY));
    rotationOfDeformation(new Float64Array(9), r);
    expect(Array.from(r)).toEqual(Array.from(IDENTITY));
    // Everything squashed onto a line along (1, 1, 0)/√2: any rotation taking x to that line.
    const line = Float64Array.from([1, 0, 0, 1, 0, 0, 0, 0, 0]);
    rotationOfDeformation(line, r);
    expect(determinant3(r)).toBeCloseTo(1, 12);
    expect(r[0]).toBeCloseTo(Math.SQRT1_2, 12);
    expect(r[3]).toBeCloseTo(Math.SQRT1_2, 12);
  });
});
