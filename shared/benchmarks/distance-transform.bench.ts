/**
 * Throughput of the exact Euclidean distance transforms on anisotropic grids, beside a
 * straightforward reference in the same run. Not a test: run it and read the figures.
 *
 *   node --import tsx shared/benchmarks/distance-transform.bench.ts
 *
 * References, clearly not the same computation:
 * - a two-pass city-block transform (6-neighbour chamfer, weighted by spacing): the naive
 *   O(N) approximation, which overestimates Euclidean distance by up to √3 in 3-D;
 * - the brute force (nearest of all seeds, O(N·seeds)) on small grids, for scale.
 */
import {
  euclideanDistanceTransform,
  signedDistanceTransform,
} from '../src/geometry/distance-transform';
import type { GridDimensions } from '../src/geometry/patient-geometry';
import type { Vec3 } from '../src/geometry/vector';

const SPACING_MM: Vec3 = [0.7, 0.7, 2.5];
const SIZES = [64, 100, 160];
const RUNS = 5;

/** mulberry32 (common practice): numbers in [0, 1). */
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

/** A tumour-like ball, two vessel-like tubes and scattered specks: about 5 % of the grid. */
function syntheticMask(size: number): Uint8Array {
  const random = seededRandom(size);
  const mask = new Uint8Array(size ** 3);
  const centre = (size - 1) / 2;
  for (let z = 0; z < size; z++) {
    for (let y = 0; y < size; y++) {
      for (let x = 0; x < size; x++) {
        const isBall = (x - centre) ** 2 + (y - centre) ** 2 + (z - centre) ** 2 < (size / 6) ** 2;
        const isTube =
          (x - size / 4) ** 2 + (z - size / 3) ** 2 < (size / 25) ** 2 ||
          (y - (3 * size) / 4) ** 2 + (z - (2 * size) / 3) ** 2 < (size / 30) ** 2;
        if (isBall || isTube || random() < 0.002) mask[x + size * (y + size * z)] = 1;
      }
    }
  }
  return mask;
}

/** Naive reference: city-block distance by a forward and a backward sweep (approximation). */
function cityBlockTransform(
  mask: Uint8Array,
  dimensions: GridDimensions,
  spacingMm: Vec3,
): Float32Array {
  const [nx, ny, nz] = dimensions;
  const [wx, wy, wz] = spacingMm;
  const field = Float32Array.from(mask, (value) => (value !== 0 ? 0 : Infinity));
  for (let z = 0; z < nz; z++) {
    for (let y = 0; y < ny; y++) {
      for (let x = 0; x < nx; x++) {
        const index = x + nx * (y + ny * z);
        let best = field[index];
        if (x > 0) best = Math.min(best, field[index - 1] + wx);
        if (y > 0) best = Math.min(best, field[index - nx] + wy);
        if (z > 0) best = Math.min(best, field[index - nx * ny] + wz);
        field[index] = best;
      }
    }
  }
  for (let z = nz - 1; z >= 0; z--) {
    for (let y = ny - 1; y >= 0; y--) {
      for (let x = nx - 1; x >= 0; x--) {
        const index = x + nx * (y + ny * z);
        let best = field[index];
        if (x < nx - 1) best = Math.min(best, field[index + 1] + wx);
        if (y < ny - 1) best = Math.min(best, field[index + nx] + wy);
        if (z < nz - 1) best = Math.min(best, field[index + nx * ny] + wz);
        field[index] = best;
      }
    }
  }
  return field;
}

/** Reference: the nearest of all seeds for every voxel. */
function bruteForceTransform(
  mask: Uint8Array,
  dimensions: GridDimensions,
  spacingMm: Vec3,
): Float32Array {
  const [nx, ny] = dimensions;
  const seeds: Vec3[] = [];
  mask.forEach((value, index) => {
    if (value !== 0)
      seeds.push([index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))]);
  });
  return Float32Array.from(mask, (_, index) => {
    const x = index % nx;
    const y = Math.floor(index / nx) % ny;
    const z = Math.floor(index / (nx * ny));
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

/** Median wall time of `runs` calls after one warm-up, milliseconds, and the last result. */
function timed(
  runs: number,
  run: () => Float32Array,
): { milliseconds: number; result: Float32Array } {
  let result = run();
  const times: number[] = [];
  for (let index = 0; index < runs; index++) {
    const start = performance.now();
    result = run();
    times.push(performance.now() - start);
  }
  times.sort((a, b) => a - b);
  return { milliseconds: times[Math.floor(times.length / 2)], result };
}

function megavoxelsPerSecond(voxels: number, milliseconds: number): string {
  return (voxels / milliseconds / 1000).toFixed(1).padStart(8);
}

function largestGap(approximate: Float32Array, exact: Float32Array): number {
  let largest = 0;
  for (let index = 0; index < exact.length; index++) {
    largest = Math.max(largest, approximate[index] - exact[index]);
  }
  return largest;
}

console.log(
  `Spacing ${SPACING_MM.join(' × ')} mm; median of ${RUNS} runs; Mvoxel/s = millions of voxels per second.`,
);
console.log(
  'grid     voxels      exact EDT  signed EDT  city-block*  city-block overestimate (max, mm)',
);
for (const size of SIZES) {
  const dimensions: GridDimensions = [size, size, size];
  const mask = syntheticMask(size);
  const voxels = mask.length;
  const exact = timed(RUNS, () => euclideanDistanceTransform(mask, dimensions, SPACING_MM));
  const signed = timed(RUNS, () => signedDistanceTransform(mask, dimensions, SPACING_MM));
  const cityBlock = timed(RUNS, () => cityBlockTransform(mask, dimensions, SPACING_MM));
  console.log(
    `${`${size}³`.padEnd(8)} ${String(voxels).padStart(9)} ` +
      `${megavoxelsPerSecond(voxels, exact.milliseconds)}   ` +
      `${megavoxelsPerSecond(voxels, signed.milliseconds)}    ` +
      `${megavoxelsPerSecond(voxels, cityBlock.milliseconds)}     ` +
      `${largestGap(cityBlock.result, exact.result).toFixed(2)}`,
  );
}
console.log('* city-block: a naive two-pass approximation, not a Euclidean transform.');

const smallSize = 24;
const smallDimensions: GridDimensions = [smallSize, smallSize, smallSize];
const smallMask = syntheticMask(smallSize);
const seedCount = smallMask.reduce((count, value) => count + (value !== 0 ? 1 : 0), 0);
const brute = timed(1, () => bruteForceTransform(smallMask, smallDimensions, SPACING_MM));
const exactSmall = timed(RUNS, () =>
  euclideanDistanceTransform(smallMask, smallDimensions, SPACING_MM),
);
const agrees =
  largestGap(brute.result, exactSmall.result) <= 1e-4 &&
  largestGap(exactSmall.result, brute.result) <= 1e-4;
console.log(
  `brute force on ${smallSize}³ (${seedCount} seeds): ${megavoxelsPerSecond(smallMask.length, brute.milliseconds).trim()} ` +
    `Mvoxel/s, exact EDT ${megavoxelsPerSecond(smallMask.length, exactSmall.milliseconds).trim()} Mvoxel/s; ` +
    `results ${agrees ? 'agree' : 'DIFFER'} within 1e-4 mm. Brute force falls as 1/seeds; it is O(N·seeds).`,
);
