/**
 * Exact Euclidean distance transforms of binary masks on anisotropic grids, by the lower
 * envelope of parabolas of Felzenszwalb & Huttenlocher (Theory of Computing 2012;8:415):
 * one pass per axis, each O(n) per line, so O(N) per pass over N voxels. Along an axis of
 * spacing w each line solves d(p) = min_q f(q) + w²(p − q)², f being the squared distance
 * found by the passes before.
 *
 * Masks are `Uint8Array`s over voxel indices (i, j, k) with i fastest: index i + nx·(j + ny·k).
 * Distances are millimetres between voxel centres.
 */
import { voxelCount, type GridDimensions } from './patient-geometry';
import type { Vec3 } from './vector';
import { checkBoxInsideGrid, wholeGridBox, type VoxelBox } from './voxel-box';

/** Options of the distance transforms. */
export interface DistanceTransformOptions {
  /**
   * Compute on this box of the mask only; the answer then covers the box alone (i fastest
   * within the box) and ignores the voxels outside it. A distance d at a voxel is therefore
   * exact whenever d does not exceed that voxel's distance to the box's faces on the sides
   * where the grid goes on: pad the box by the largest distance of interest.
   */
  box?: VoxelBox;
}

/**
 * Distance from each voxel centre to the nearest non-zero voxel centre, millimetres: 0 on
 * non-zero voxels, Infinity everywhere when the mask (or the box) holds no non-zero voxel.
 * `dimensions` [nx, ny, nz] in voxels, `spacingMm` [Δi, Δj, Δk] in millimetres.
 */
export function euclideanDistanceTransform(
  mask: Uint8Array,
  dimensions: Readonly<GridDimensions>,
  spacingMm: Readonly<Vec3>,
  options: DistanceTransformOptions = {},
): Float32Array {
  const box = checkInput(mask, dimensions, spacingMm, options);
  const squaredMm = squaredDistanceField(mask, dimensions, box, spacingMm, true);
  const distancesMm = new Float32Array(squaredMm.length);
  for (let index = 0; index < squaredMm.length; index++) {
    distancesMm[index] = Math.sqrt(squaredMm[index]);
  }
  return distancesMm;
}

/**
 * Signed distance, millimetres, by the voxel-centre convention: on a voxel outside the mask
 * (zero), +the distance to the nearest inside voxel centre; on a voxel inside (non-zero),
 * −the distance to the nearest outside voxel centre. No voxel gets 0: a face-adjacent pair
 * across the boundary holds −w and +w (w the spacing across that face), so linear
 * interpolation between them crosses zero on the shared voxel face — the zero level is the
 * surface of the voxelised structure. With no inside voxel every value is +Infinity; with no
 * outside voxel every value is −Infinity. Arguments and `box` as `euclideanDistanceTransform`.
 */
export function signedDistanceTransform(
  mask: Uint8Array,
  dimensions: Readonly<GridDimensions>,
  spacingMm: Readonly<Vec3>,
  options: DistanceTransformOptions = {},
): Float32Array {
  const box = checkInput(mask, dimensions, spacingMm, options);
  const outsideMm = squaredDistanceField(mask, dimensions, box, spacingMm, true);
  const insideMm = squaredDistanceField(mask, dimensions, box, spacingMm, false);
  const signedMm = new Float32Array(outsideMm.length);
  for (let index = 0; index < signedMm.length; index++) {
    // Exactly one of the two is 0 at every voxel: it is a seed of one field or the other.
    signedMm[index] = Math.sqrt(outsideMm[index]) - Math.sqrt(insideMm[index]);
  }
  return signedMm;
}

function checkInput(
  mask: Uint8Array,
  dimensions: Readonly<GridDimensions>,
  spacingMm: Readonly<Vec3>,
  options: DistanceTransformOptions,
): VoxelBox {
  if (!dimensions.every((extent) => Number.isInteger(extent) && extent >= 1)) {
    throw new RangeError(`dimensions must be positive integers, got ${dimensions.join(' × ')}`);
  }
  if (mask.length !== voxelCount(dimensions)) {
    throw new RangeError(
      `a mask of ${dimensions.join(' × ')} voxels needs ${voxelCount(dimensions)} values, ` +
        `got ${mask.length}`,
    );
  }
  if (!spacingMm.every((spacing) => spacing > 0 && Number.isFinite(spacing))) {
    throw new RangeError(`spacing must be positive and finite, got ${spacingMm.join(', ')} mm`);
  }
  const box = options.box ?? wholeGridBox(dimensions);
  checkBoxInsideGrid(box, dimensions);
  return box;
}

/**
 * Squared distances (mm²) over the box to the nearest seed; seeds are the non-zero voxels
 * when `seedIsNonZero`, the zero voxels otherwise.
 */
function squaredDistanceField(
  mask: Uint8Array,
  dimensions: Readonly<GridDimensions>,
  box: VoxelBox,
  spacingMm: Readonly<Vec3>,
  seedIsNonZero: boolean,
): Float64Array {
  const [nx, ny, nz] = box.size;
  const field = new Float64Array(nx * ny * nz);
  nearestSeedAlongI(mask, dimensions, box, spacingMm[0], seedIsNonZero, field);
  const longest = Math.max(nx, ny, nz);
  const scratch: EnvelopeScratch = {
    line: new Float64Array(longest),
    apexes: new Int32Array(longest),
    apexValues: new Float64Array(longest),
    bounds: new Float64Array(longest),
  };
  const [, spacingJMm, spacingKMm] = spacingMm;
  // Along j: lines start at each i of each slice. Along k: at each (i, j) of the first slice.
  if (ny > 1) {
    lowerEnvelopePass(field, ny, nx, nx, nz, nx * ny, spacingJMm * spacingJMm, scratch);
  }
  if (nz > 1) {
    lowerEnvelopePass(field, nz, nx * ny, nx * ny, 1, 0, spacingKMm * spacingKMm, scratch);
  }
  return field;
}

/**
 * First pass, along i: the squared distance (mm²) to the nearest seed on the same line, found
 * by one sweep each way (the one-dimensional transform of a binary line needs no envelope).
 */
function nearestSeedAlongI(
  mask: Uint8Array,
  dimensions: Readonly<GridDimensions>,
  box: VoxelBox,
  spacingIMm: number,
  seedIsNonZero: boolean,
  field: Float64Array,
): void {
  const [nx, ny, nz] = box.size;
  const [x0, y0, z0] = box.start;
  for (let z = 0; z < nz; z++) {
    for (let y = 0; y < ny; y++) {
      const maskRow = x0 + dimensions[0] * (y0 + y + dimensions[1] * (z0 + z));
      const fieldRow = nx * (y + ny * z);
      let lastSeed = -Infinity;
      for (let x = 0; x < nx; x++) {
        if ((mask[maskRow + x] !== 0) === seedIsNonZero) lastSeed = x;
        field[fieldRow + x] = x - lastSeed;
      }
      let nextSeed = Infinity;
      for (let x = nx - 1; x >= 0; x--) {
        if ((mask[maskRow + x] !== 0) === seedIsNonZero) nextSeed = x;
        const distanceMm = Math.min(field[fieldRow + x], nextSeed - x) * spacingIMm;
        field[fieldRow + x] = distanceMm * distanceMm;
      }
    }
  }
}

interface EnvelopeScratch {
  /** The line being transformed. */
  line: Float64Array;
  /** Per parabola of the envelope: its apex, f at the apex, and where its segment starts. */
  apexes: Int32Array;
  apexValues: Float64Array;
  bounds: Float64Array;
}

/**
 * One pass along an axis of `length` voxels with element stride `stride`. The lines start at
 * `innerCount` consecutive offsets, repeated `outerCount` times `outerStride` apart.
 */
function lowerEnvelopePass(
  field: Float64Array,
  length: number,
  stride: number,
  innerCount: number,
  outerCount: number,
  outerStride: number,
  weightSquared: number,
  scratch: EnvelopeScratch,
): void {
  const { line } = scratch;
  for (let outer = 0; outer < outerCount; outer++) {
    for (let inner = 0; inner < innerCount; inner++) {
      const start = outer * outerStride + inner;
      for (let p = 0; p < length; p++) line[p] = field[start + p * stride];
      lowerEnvelope(length, weightSquared, scratch);
      for (let p = 0; p < length; p++) field[start + p * stride] = line[p];
    }
  }
}

/**
 * d(p) = min_q f(q) + w²(p − q)² for p < length, f the scratch line, which d replaces
 * (Felzenszwalb & Huttenlocher 2012, the one-dimensional algorithm, w² = `weightSquared`).
 * Infinite entries hold no parabola; a line with none stays infinite. The envelope keeps f at
 * each apex, so the line can be overwritten while d is filled in.
 */
function lowerEnvelope(length: number, weightSquared: number, scratch: EnvelopeScratch): void {
  const { line, apexes, apexValues, bounds } = scratch;
  let top = -1;
  for (let q = 0; q < length; q++) {
    const value = line[q];
    if (value === Infinity) continue;
    const shifted = value + weightSquared * q * q;
    let intersection = -Infinity;
    while (top >= 0) {
      const apex = apexes[top];
      const apexShifted = apexValues[top] + weightSquared * apex * apex;
      intersection = (shifted - apexShifted) / (2 * weightSquared * (q - apex));
      if (intersection > bounds[top]) break;
      top--;
    }
    top++;
    apexes[top] = q;
    apexValues[top] = value;
    bounds[top] = top === 0 ? -Infinity : intersection;
  }
  if (top < 0) return;
  let segment = 0;
  for (let p = 0; p < length; p++) {
    while (segment < top && bounds[segment + 1] < p) segment++;
    const fromApex = p - apexes[segment];
    line[p] = apexValues[segment] + weightSquared * fromApex * fromApex;
  }
}
