// shared/tsconfig.spec.json takes only *.spec.ts, and ambient declarations of untyped packages
// cannot be imported: hence a reference to them.
// eslint-disable-next-line @typescript-eslint/triple-slash-reference
/// <reference path="./distance-transform-package.d.ts" />
import distanceTransform from 'distance-transform';
import ndarray from 'ndarray';
import { describe, expect, it } from 'vitest';
import { euclideanDistanceTransform, signedDistanceTransform } from './distance-transform';
import type { GridDimensions } from './patient-geometry';
import type { Vec3 } from './vector';
import type { VoxelBox } from './voxel-box';

const FELZENSZWALB = 'Felzenszwalb & Huttenlocher, Theory of Computing 2012;8:415';
/** Float32 output: a relative rounding of 2⁻²⁴ ≈ 6e-8; allow 1e-6. */
const FLOAT32_RELATIVE = 1e-6;

/** mulberry32, a small seeded PRNG (common practice); numbers in [0, 1). */
function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function randomMask(dimensions: GridDimensions, density: number, seed: number): Uint8Array {
  const random = seededRandom(seed);
  return Uint8Array.from({ length: dimensions[0] * dimensions[1] * dimensions[2] }, () =>
    random() < density ? 1 : 0,
  );
}

function coordinates(index: number, dimensions: Readonly<GridDimensions>): Vec3 {
  const [nx, ny] = dimensions;
  return [index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))];
}

/**
 * The O(N²) oracle: for every voxel, the smallest distance (mm) to a voxel whose mask value
 * passes `isSeed`; Infinity when none does.
 */
function bruteForce(
  mask: Uint8Array,
  dimensions: GridDimensions,
  spacingMm: Vec3,
  isSeed: (value: number) => boolean = (value) => value !== 0,
): Float64Array {
  const seeds = [...mask.keys()]
    .filter((index) => isSeed(mask[index]))
    .map((index) => coordinates(index, dimensions));
  return Float64Array.from(mask, (_, index) => {
    const [x, y, z] = coordinates(index, dimensions);
    let best = Infinity;
    for (const [sx, sy, sz] of seeds) {
      const squared =
        ((x - sx) * spacingMm[0]) ** 2 +
        ((y - sy) * spacingMm[1]) ** 2 +
        ((z - sz) * spacingMm[2]) ** 2;
      if (squared < best) best = squared;
    }
    return Math.sqrt(best);
  });
}

function signedBruteForce(
  mask: Uint8Array,
  dimensions: GridDimensions,
  spacingMm: Vec3,
): Float64Array {
  const outside = bruteForce(mask, dimensions, spacingMm);
  const inside = bruteForce(mask, dimensions, spacingMm, (value) => value === 0);
  return Float64Array.from(mask, (value, index) => (value !== 0 ? -inside[index] : outside[index]));
}

/** Largest difference, Infinity where one side is infinite and the other is not. */
function largestDifference(actual: ArrayLike<number>, expected: ArrayLike<number>): number {
  expect(actual.length).toBe(expected.length);
  let largest = 0;
  for (let index = 0; index < actual.length; index++) {
    if (actual[index] === expected[index]) continue;
    const scaleMm = Math.max(1, Math.abs(expected[index]));
    largest = Math.max(largest, Math.abs(actual[index] - expected[index]) / scaleMm);
  }
  return Number.isNaN(largest) ? Infinity : largest;
}

const SHAPES: GridDimensions[] = [
  [1, 1, 1],
  [9, 1, 1],
  [1, 8, 1],
  [1, 1, 7],
  [5, 4, 3],
  [9, 7, 5],
  [3, 8, 6],
  [12, 3, 2],
  [16, 16, 4],
  [6, 6, 6],
];
const DENSITIES = [0.005, 0.05, 0.3, 0.8];
const SPACINGS: Vec3[] = [
  [0.7, 0.7, 2.5],
  [1.3, 0.4, 0.9],
  [0.5, 3, 1],
  [1, 1, 1],
];
const RANDOM_CASES = SHAPES.flatMap((dimensions, shape) =>
  DENSITIES.map((density, row) => ({
    dimensions,
    density,
    spacingMm: SPACINGS[(shape + row) % SPACINGS.length],
    seed: 1000 * shape + row + 1,
  })),
);

describe(`equals the brute-force oracle on random anisotropic masks, ${FELZENSZWALB}`, () => {
  it.each(RANDOM_CASES)(
    'matches on $dimensions at density $density, spacing $spacingMm mm',
    ({ dimensions, density, spacingMm, seed }) => {
      const mask = randomMask(dimensions, density, seed);
      const ours = euclideanDistanceTransform(mask, dimensions, spacingMm);
      expect(largestDifference(ours, bruteForce(mask, dimensions, spacingMm))).toBeLessThan(
        FLOAT32_RELATIVE,
      );
    },
  );
});

describe(`worked values computed by hand, ${FELZENSZWALB} [C]`, () => {
  const dimensions: GridDimensions = [3, 3, 3];
  const spacingMm: Vec3 = [0.7, 0.7, 2.5];
  const seedAtOrigin = Uint8Array.from({ length: 27 }, (_, index) => (index === 0 ? 1 : 0));
  const distancesMm = euclideanDistanceTransform(seedAtOrigin, dimensions, spacingMm);

  it('puts voxel (1, 1, 1) 2.689 mm from a seed at the origin, spacing (0.7, 0.7, 2.5)', () => {
    expect(distancesMm[1 + 3 * (1 + 3 * 1)]).toBeCloseTo(2.689, 3);
  });

  it.each([
    { voxel: [0, 0, 0], distanceMm: 0 },
    { voxel: [2, 0, 0], distanceMm: 1.4 },
    { voxel: [0, 0, 1], distanceMm: 2.5 },
    { voxel: [2, 2, 2], distanceMm: Math.sqrt(1.4 ** 2 + 1.4 ** 2 + 5 ** 2) },
  ])(
    'puts voxel $voxel at $distanceMm mm (Pythagoras, common practice)',
    ({ voxel, distanceMm }) => {
      expect(distancesMm[voxel[0] + 3 * (voxel[1] + 3 * voxel[2])]).toBeCloseTo(distanceMm, 5);
    },
  );

  it('answers Infinity everywhere for an empty mask', () => {
    const empty = euclideanDistanceTransform(new Uint8Array(60), [5, 4, 3], spacingMm);
    expect(empty.every((value) => value === Infinity)).toBe(true);
  });

  it('answers 0 everywhere for a full mask', () => {
    const full = euclideanDistanceTransform(new Uint8Array(60).fill(7), [5, 4, 3], spacingMm);
    expect(full.every((value) => value === 0)).toBe(true);
  });
});

/** Distances from the scijs package, on an isotropic grid of spacing 1 (voxel units). */
function packageDistances(mask: Uint8Array, dimensions: GridDimensions): Float64Array {
  const [nx, ny, nz] = dimensions;
  const data = Float64Array.from(mask);
  distanceTransform(ndarray(data, [nx, ny, nz], [1, nx, nx * ny]));
  return data;
}

function maskOf(dimensions: GridDimensions, isSet: (voxel: Vec3) => boolean): Uint8Array {
  const count = dimensions[0] * dimensions[1] * dimensions[2];
  return Uint8Array.from({ length: count }, (_, index) =>
    isSet(coordinates(index, dimensions)) ? 1 : 0,
  );
}

describe('against the npm package distance-transform 1.0.2 (scijs, Meijster, isotropic)', () => {
  it.each([
    {
      name: 'a single seed',
      dimensions: [9, 8, 7],
      isSet: ([x, y, z]: Vec3) => x === 2 && y === 5 && z === 6,
    },
    {
      name: 'a lattice of seeds 4 apart',
      dimensions: [12, 12, 12],
      isSet: ([x, y, z]: Vec3) => x % 4 === 1 && y % 4 === 2 && z % 4 === 3,
    },
    { name: 'a plane', dimensions: [9, 9, 9], isSet: ([, , z]: Vec3) => z === 4 },
    { name: 'a line', dimensions: [10, 9, 8], isSet: ([x, y]: Vec3) => x === 3 && y === 4 },
  ] as { name: string; dimensions: GridDimensions; isSet: (voxel: Vec3) => boolean }[])(
    'agrees on $name',
    ({ dimensions, isSet }) => {
      const mask = maskOf(dimensions, isSet);
      const ours = euclideanDistanceTransform(mask, dimensions, [1, 1, 1]);
      expect(largestDifference(ours, packageDistances(mask, dimensions))).toBeLessThan(
        FLOAT32_RELATIVE,
      );
    },
  );

  // On other masks the package's second pass (lib/p2.js) writes results into the line it is
  // still reading, so a parabola whose apex it has already overwritten is read too low: it
  // can only underestimate. Ours must equal the oracle there; the package stays below it.
  it('differs on a ball only where the package falls below the brute-force oracle', () => {
    const dimensions: GridDimensions = [13, 13, 13];
    const mask = maskOf(dimensions, ([x, y, z]) => (x - 6) ** 2 + (y - 6) ** 2 + (z - 6) ** 2 <= 9);
    const ours = euclideanDistanceTransform(mask, dimensions, [1, 1, 1]);
    const oracle = bruteForce(mask, dimensions, [1, 1, 1]);
    const reference = packageDistances(mask, dimensions);
    expect(largestDifference(ours, oracle)).toBeLessThan(FLOAT32_RELATIVE);
    const disagreements = [...ours.keys()].filter(
      (index) => Math.abs(ours[index] - reference[index]) > 1e-6,
    );
    expect(disagreements.length).toBeGreaterThan(0);
    expect(disagreements.every((index) => reference[index] < oracle[index])).toBe(true);
  });
});

describe('signed distance, voxel-centre convention', () => {
  it.each(RANDOM_CASES.filter((_, row) => row % 2 === 0))(
    'matches the signed brute force on $dimensions at density $density, spacing $spacingMm mm',
    ({ dimensions, density, spacingMm, seed }) => {
      const mask = randomMask(dimensions, density, seed);
      const ours = signedDistanceTransform(mask, dimensions, spacingMm);
      expect(largestDifference(ours, signedBruteForce(mask, dimensions, spacingMm))).toBeLessThan(
        FLOAT32_RELATIVE,
      );
    },
  );

  it('holds −w and +w on the two sides of a face, w the spacing across it', () => {
    const dimensions: GridDimensions = [6, 6, 6];
    const spacingMm: Vec3 = [0.8, 0.6, 2];
    const cube = maskOf(dimensions, (voxel) => voxel.every((value) => value >= 2 && value <= 3));
    const signed = signedDistanceTransform(cube, dimensions, spacingMm);
    const at = (x: number, y: number, z: number) => signed[x + 6 * (y + 6 * z)];
    expect([at(2, 2, 2), at(1, 2, 2)]).toEqual([-0.6, 0.8].map(Math.fround));
    expect([at(2, 2, 3), at(2, 2, 4)]).toEqual([-0.6, 2].map(Math.fround));
    expect([at(3, 3, 2), at(3, 4, 2)]).toEqual([-0.6, 0.6].map(Math.fround));
  });

  it('answers +Infinity everywhere with nothing inside, −Infinity with nothing outside', () => {
    const spacingMm: Vec3 = [1, 1, 1];
    expect(signedDistanceTransform(new Uint8Array(24), [2, 3, 4], spacingMm)).toEqual(
      new Float32Array(24).fill(Infinity),
    );
    expect(signedDistanceTransform(new Uint8Array(24).fill(1), [2, 3, 4], spacingMm)).toEqual(
      new Float32Array(24).fill(-Infinity),
    );
  });
});

function cropped(mask: Uint8Array, dimensions: GridDimensions, box: VoxelBox): Uint8Array {
  const [bx, by, bz] = box.size;
  return Uint8Array.from({ length: bx * by * bz }, (_, index) => {
    const [x, y, z] = coordinates(index, box.size);
    return mask[
      box.start[0] + x + dimensions[0] * (box.start[1] + y + dimensions[1] * (box.start[2] + z))
    ];
  });
}

describe('on a box (crop) of a larger mask', () => {
  const dimensions: GridDimensions = [14, 11, 9];
  const spacingMm: Vec3 = [0.7, 0.9, 2.5];
  const mask = randomMask(dimensions, 0.02, 77);
  const box: VoxelBox = { start: [3, 2, 1], size: [8, 7, 5] };
  const inBox = euclideanDistanceTransform(mask, dimensions, spacingMm, { box });

  it('equals the brute force on the box’s own voxels', () => {
    const expected = bruteForce(cropped(mask, dimensions, box), box.size, spacingMm);
    expect(largestDifference(inBox, expected)).toBeLessThan(FLOAT32_RELATIVE);
  });

  it('equals the whole-grid transform wherever the distance is within the box’s margin', () => {
    const whole = euclideanDistanceTransform(mask, dimensions, spacingMm);
    let checked = 0;
    inBox.forEach((distanceMm, index) => {
      const local = coordinates(index, box.size);
      const global = local.map((value, axis) => value + box.start[axis]);
      const wholeMm = whole[global[0] + dimensions[0] * (global[1] + dimensions[1] * global[2])];
      // Any voxel outside the box is at least this far along some axis.
      const marginMm = Math.min(
        ...[0, 1, 2].flatMap((axis) => [
          box.start[axis] > 0 ? (local[axis] + 1) * spacingMm[axis] : Infinity,
          box.start[axis] + box.size[axis] < dimensions[axis]
            ? (box.size[axis] - local[axis]) * spacingMm[axis]
            : Infinity,
        ]),
      );
      expect(distanceMm).toBeGreaterThanOrEqual(wholeMm);
      if (distanceMm <= marginMm) {
        expect(distanceMm).toBe(wholeMm);
        checked++;
      }
    });
    expect(checked).toBeGreaterThan(0);
  });

  it('crops the signed transform the same way', () => {
    const signed = signedDistanceTransform(mask, dimensions, spacingMm, { box });
    const expected = signedBruteForce(cropped(mask, dimensions, box), box.size, spacingMm);
    expect(largestDifference(signed, expected)).toBeLessThan(FLOAT32_RELATIVE);
  });
});

describe('refused input', () => {
  const mask = new Uint8Array(24);
  it.each([
    { name: 'a mask of the wrong length', dimensions: [2, 3, 5], spacingMm: [1, 1, 1] },
    { name: 'a fractional dimension', dimensions: [2, 3, 4.5], spacingMm: [1, 1, 1] },
    { name: 'a spacing of 0', dimensions: [2, 3, 4], spacingMm: [1, 0, 1] },
    { name: 'a NaN spacing', dimensions: [2, 3, 4], spacingMm: [1, 1, Number.NaN] },
    { name: 'an infinite spacing', dimensions: [2, 3, 4], spacingMm: [Infinity, 1, 1] },
  ] as { name: string; dimensions: GridDimensions; spacingMm: Vec3 }[])(
    'throws a RangeError for $name',
    ({ dimensions, spacingMm }) => {
      expect(() => euclideanDistanceTransform(mask, dimensions, spacingMm)).toThrow(RangeError);
    },
  );

  it.each([
    { name: 'past the grid', box: { start: [1, 0, 0], size: [2, 3, 4] } },
    { name: 'empty', box: { start: [0, 0, 0], size: [2, 0, 4] } },
    { name: 'at a negative start', box: { start: [0, -1, 0], size: [1, 1, 1] } },
  ] as { name: string; box: VoxelBox }[])('throws a RangeError for a box $name', ({ box }) => {
    expect(() => signedDistanceTransform(mask, [2, 3, 4], [1, 1, 1], { box })).toThrow(RangeError);
  });
});
