import { nearestSampleValues } from './nearest-sample';

/** Park–Miller minimal standard generator (Park & Miller, CACM 1988): repeatable clouds. */
function generator(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 16807) % 2147483647;
    return state / 2147483647;
  };
}

function cloud(count: number, next: () => number, spreadMm: number): Float32Array {
  return Float32Array.from({ length: 3 * count }, () => (next() - 0.5) * spreadMm);
}

/** The nearest sample by looking at every one: the definition itself. */
function bruteForce(points: Float32Array, samples: Float32Array, values: Float32Array): number[] {
  const answers: number[] = [];
  for (let p = 0; p < points.length / 3; p++) {
    let best = Infinity;
    let value = Number.NaN;
    for (let s = 0; s < samples.length / 3; s++) {
      const d = Math.hypot(
        samples[3 * s] - points[3 * p],
        samples[3 * s + 1] - points[3 * p + 1],
        samples[3 * s + 2] - points[3 * p + 2],
      );
      if (d < best) {
        best = d;
        value = values[s];
      }
    }
    answers.push(value);
  }
  return answers;
}

describe('nearest sample values', () => {
  it('agrees with the exhaustive search on random clouds, inside and around the samples', () => {
    const next = generator(20260414);
    const samples = cloud(800, next, 40);
    const values = Float32Array.from({ length: 800 }, (_, index) => index);
    // Points spread wider than the samples: some fall outside the binned box.
    const points = cloud(500, next, 70);
    for (const binMm of [1, 3, 11]) {
      expect([...nearestSampleValues(points, samples, values, { binMm })]).toEqual(
        bruteForce(points, samples, values),
      );
    }
  });

  it('gives the vertices of a sphere the margins sampled on a sphere just inside it', () => {
    // Samples on a 10 mm sphere carry their own z as the value; vertices on an 11 mm sphere
    // sit 1 mm radially outside a sample, so the nearest is close below them: |Δz| ≲ spacing.
    const samples: number[] = [];
    const values: number[] = [];
    for (let t = 0; t < 40; t++) {
      for (let f = 0; f < 80; f++) {
        const theta = ((t + 0.5) / 40) * Math.PI;
        const phi = (f / 80) * 2 * Math.PI;
        const point = [
          Math.sin(theta) * Math.cos(phi),
          Math.sin(theta) * Math.sin(phi),
          Math.cos(theta),
        ].map((c) => 10 * c);
        samples.push(...point);
        values.push(point[2]);
      }
    }
    const vertices = Float32Array.from([0, 0, 11, 11, 0, 0, 0, -11, 0, 0, 0, -11]);
    const found = nearestSampleValues(
      vertices,
      Float32Array.from(samples),
      Float32Array.from(values),
    );
    // Grid spacing on the sphere: π·10/40 ≈ 0.79 mm between rings.
    expect([...found].map((z) => Math.round(z) + 0)).toEqual([10, 0, 0, -10]);
  });

  it('answers NaN without samples, and beyond the distance asked for', () => {
    const points = Float32Array.from([0, 0, 0, 50, 0, 0]);
    expect(
      [...nearestSampleValues(points, new Float32Array(0), new Float32Array(0))].every(
        Number.isNaN,
      ),
    ).toBe(true);
    const found = nearestSampleValues(
      points,
      Float32Array.from([1, 0, 0]),
      Float32Array.from([4]),
      {
        maxDistanceMm: 5,
      },
    );
    expect(found[0]).toBe(4);
    expect(Number.isNaN(found[1])).toBe(true);
  });
});
