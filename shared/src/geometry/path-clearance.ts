/**
 * A straight applicator path from entry to tip (LPS, millimetres) checked against distance
 * fields: how close it comes to a structure, where, and how much of it runs inside one.
 *
 * Between voxel centres a field is interpolated trilinearly. A distance to a set of voxel
 * centres is 1-Lipschitz, so the interpolated value at a point differs from the exact
 * distance there to the same centres by at most half a voxel diagonal, either way:
 * Σ wₙ|cₙ − p| ≤ √(Σ wₙ|cₙ − p|²) = √(Σ Δ²·t(1 − t)) ≤ ½√(Δi² + Δj² + Δk²), with wₙ the
 * corner weights and t the fractional position along each axis. See `halfVoxelDiagonalMm`.
 *
 * A distance transform measures to the centres of a structure's voxels, not to the structure:
 * for a vessel voxelised by its centres that reads 0 to 2 half-diagonals more than the
 * distance to its true wall (path-clearance.spec.ts derives it). The assessment's clearances
 * are therefore measured to the faces of the voxels instead, exactly (cell-distance.ts); the
 * samplers here serve lengths inside structures and fields of other kinds.
 */
import { lpsToVoxel, voxelCount, type VolumeGeometry } from './patient-geometry';
import { addScaled, distance, subtract, type Vec3 } from './vector';

/** Values at voxel centres (index i + nx·(j + ny·k)), millimetres, on a grid in LPS. */
export interface DistanceField {
  valuesMm: Float32Array;
  geometry: VolumeGeometry;
}

/** Longest step between path samples, millimetres. */
export const MAXIMUM_PATH_STEP_MM = 0.5;

/** How a path is sampled: `sampleCount` points from entry to tip, `stepMm` apart. */
export interface PathSampling {
  lengthMm: number;
  stepMm: number;
  sampleCount: number;
}

/** Closest approach of a path to a structure. */
export interface PathClearance extends PathSampling {
  /** Smallest interpolated field value on the path, mm; null if no sample lies on the grid. */
  minimumDistanceMm: number | null;
  /** Where it lies, measured along the path from the entry, mm (the first if tied). */
  minimumFromEntryMm: number | null;
  /** Where it lies, LPS, millimetres. */
  minimumAtLps: Vec3 | null;
  /** Samples beyond the grid's outermost voxel centres, where the field is not known. */
  samplesOutsideField: number;
}

/** Half the diagonal of a voxel of the given spacing (mm): the interpolation bound above. */
export function halfVoxelDiagonalMm(spacingMm: Readonly<Vec3>): number {
  return 0.5 * Math.hypot(spacingMm[0], spacingMm[1], spacingMm[2]);
}

/**
 * Samples from entry to tip (LPS, millimetres), both ends included, at equal steps of at
 * most `maximumStepMm`. A path of zero length is one sample.
 */
export function pathSampling(
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
  maximumStepMm = MAXIMUM_PATH_STEP_MM,
): PathSampling {
  if (!(maximumStepMm > 0)) throw new RangeError(`step must be positive, got ${maximumStepMm}`);
  const lengthMm = distance(entryLps, tipLps);
  if (!Number.isFinite(lengthMm)) throw new RangeError('entry and tip must be finite');
  const steps = Math.ceil(lengthMm / maximumStepMm);
  return { lengthMm, stepMm: steps === 0 ? 0 : lengthMm / steps, sampleCount: steps + 1 };
}

/**
 * Field value at a patient position (LPS, millimetres) by trilinear interpolation of the
 * values at the eight surrounding voxel centres; null beyond the outermost centres. Infinite
 * values (the field of an empty mask) are answered as they are.
 */
export function sampleField(field: DistanceField, pointLps: Readonly<Vec3>): number | null {
  checkField(field);
  return interpolate(field, lpsToVoxel(field.geometry, pointLps));
}

/**
 * Smallest distance along the path from entry to tip (LPS, millimetres) in a distance field
 * (an unsigned transform: clearance to the structure; a signed one: negative while inside),
 * sampled every `maximumStepMm` at most, and where it lies. Interpolation is within
 * `halfVoxelDiagonalMm` of the distance to the voxelised structure; that distance changes by
 * at most 1 mm per mm, so between samples it can fall below the smallest sample by at most
 * half a step more.
 */
export function pathClearance(
  field: DistanceField,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
  maximumStepMm = MAXIMUM_PATH_STEP_MM,
): PathClearance {
  checkField(field);
  const sampling = pathSampling(entryLps, tipLps, maximumStepMm);
  const values = sampleAlongPath(field, entryLps, tipLps, sampling);
  let minimumIndex = -1;
  let minimumMm = Infinity;
  let samplesOutsideField = 0;
  values.forEach((value, index) => {
    if (value === null) {
      samplesOutsideField++;
    } else if (minimumIndex < 0 || value < minimumMm) {
      minimumIndex = index;
      minimumMm = value;
    }
  });
  if (minimumIndex < 0) {
    const none = { minimumDistanceMm: null, minimumFromEntryMm: null, minimumAtLps: null };
    return { ...sampling, ...none, samplesOutsideField };
  }
  const fromEntryMm = minimumIndex * sampling.stepMm;
  const along = sampling.lengthMm > 0 ? fromEntryMm / sampling.lengthMm : 0;
  return {
    ...sampling,
    minimumDistanceMm: minimumMm,
    minimumFromEntryMm: fromEntryMm,
    minimumAtLps: addScaled(entryLps, subtract(tipLps, entryLps), along),
    samplesOutsideField,
  };
}

/**
 * Length of the path from entry to tip (LPS, millimetres) that runs inside a structure, by the
 * sign of its signed distance field (negative inside; see `signedDistanceTransform`). Where
 * the sign changes between two samples the crossing is placed by linear interpolation: where
 * the field is linear between a boundary pair of centres (across a flat face) that is the
 * voxel face itself. Samples beyond the grid count as outside, their crossing at the
 * midpoint. Millimetres.
 */
export function lengthInsideSignedField(
  field: DistanceField,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
  maximumStepMm = MAXIMUM_PATH_STEP_MM,
): number {
  checkField(field);
  const sampling = pathSampling(entryLps, tipLps, maximumStepMm);
  const values = sampleAlongPath(field, entryLps, tipLps, sampling);
  let insideMm = 0;
  for (let index = 1; index < values.length; index++) {
    insideMm += sampling.stepMm * insideFraction(values[index - 1], values[index]);
  }
  return insideMm;
}

/**
 * Length of the path from entry to tip (LPS, millimetres) inside a mask (non-zero voxels;
 * index i + nx·(j + ny·k) on `geometry`), each sample taking the nearest voxel's label and a
 * change of label placed midway between samples: within half a step of the voxelised
 * structure's length at each boundary crossed. Beyond the grid counts as outside.
 * Millimetres.
 */
export function lengthInsideMask(
  mask: Uint8Array,
  geometry: VolumeGeometry,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
  maximumStepMm = MAXIMUM_PATH_STEP_MM,
): number {
  if (mask.length !== voxelCount(geometry.dimensions)) {
    throw new RangeError(
      `the mask holds ${mask.length} values, the grid has ${voxelCount(geometry.dimensions)}`,
    );
  }
  const sampling = pathSampling(entryLps, tipLps, maximumStepMm);
  const isInside = voxelsAlongPath(geometry, entryLps, tipLps, sampling).map((voxel) => {
    const index = nearestVoxelIndex(geometry, voxel);
    return index !== null && mask[index] !== 0;
  });
  let insideMm = 0;
  for (let index = 1; index < isInside.length; index++) {
    insideMm += (sampling.stepMm * (Number(isInside[index - 1]) + Number(isInside[index]))) / 2;
  }
  return insideMm;
}

function checkField(field: DistanceField): void {
  if (field.valuesMm.length !== voxelCount(field.geometry.dimensions)) {
    throw new RangeError(
      `the field holds ${field.valuesMm.length} values, its grid has ` +
        `${voxelCount(field.geometry.dimensions)} voxels`,
    );
  }
}

/** Continuous voxel indices of the samples: the map LPS → voxel is affine, so interpolate. */
function voxelsAlongPath(
  geometry: VolumeGeometry,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
  sampling: PathSampling,
): Vec3[] {
  const entry = lpsToVoxel(geometry, entryLps);
  const step = subtract(lpsToVoxel(geometry, tipLps), entry);
  const last = sampling.sampleCount - 1;
  return Array.from({ length: sampling.sampleCount }, (_, index) =>
    addScaled(entry, step, last === 0 ? 0 : index / last),
  );
}

function sampleAlongPath(
  field: DistanceField,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
  sampling: PathSampling,
): (number | null)[] {
  return voxelsAlongPath(field.geometry, entryLps, tipLps, sampling).map((voxel) =>
    interpolate(field, voxel),
  );
}

/** Share of the segment between two samples lying inside (negative values). */
function insideFraction(from: number | null, to: number | null): number {
  const isFromInside = from !== null && from < 0;
  const isToInside = to !== null && to < 0;
  if (isFromInside === isToInside) return isFromInside ? 1 : 0;
  if (from === null || to === null) return 0.5;
  const inside = isFromInside ? from : to;
  const outside = isFromInside ? to : from;
  if (!Number.isFinite(inside) || !Number.isFinite(outside)) return 0.5;
  return inside / (inside - outside);
}

/** Voxels beyond the outermost centres by less than this (in voxels) are on the grid. */
const ON_GRID_VOXELS = 1e-9;

function interpolate(field: DistanceField, voxel: Readonly<Vec3>): number | null {
  const dimensions = field.geometry.dimensions;
  const lower = [0, 0, 0];
  const fraction = [0, 0, 0];
  for (let axis = 0; axis < 3; axis++) {
    const extent = dimensions[axis];
    const coordinate = voxel[axis];
    if (!(coordinate >= -ON_GRID_VOXELS && coordinate <= extent - 1 + ON_GRID_VOXELS)) return null;
    if (extent === 1) continue;
    lower[axis] = Math.min(Math.max(Math.floor(coordinate), 0), extent - 2);
    fraction[axis] = Math.min(Math.max(coordinate - lower[axis], 0), 1);
  }
  let sum = 0;
  for (let corner = 0; corner < 8; corner++) {
    let weight = 1;
    let index = 0;
    let stride = 1;
    for (let axis = 0; axis < 3; axis++) {
      const isUpper = (corner >> axis) & 1;
      weight *= isUpper ? fraction[axis] : 1 - fraction[axis];
      index += (lower[axis] + isUpper) * stride;
      stride *= dimensions[axis];
    }
    if (weight === 0) continue;
    const value = field.valuesMm[index];
    if (!Number.isFinite(value)) return value;
    sum += weight * value;
  }
  return sum;
}

function nearestVoxelIndex(geometry: VolumeGeometry, voxel: Readonly<Vec3>): number | null {
  const [nx, ny, nz] = geometry.dimensions;
  const [i, j, k] = voxel.map(Math.round);
  if (i < 0 || j < 0 || k < 0 || i >= nx || j >= ny || k >= nz) return null;
  return i + nx * (j + ny * k);
}
