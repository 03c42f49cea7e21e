/**
 * Where and how large the structures of a label map are: for each label value asked for, its
 * voxel count, volume, centre and bounding box, in one pass over the map. What the lesion-link
 * suggestion compares with the lesions of the case. Series grid; positions LPS, millimetres.
 */
import { voxelToLps, type VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';

/** The measured voxels of one label value. */
export interface LabelGeometry {
  labelValue: number;
  voxelCount: number;
  /** voxelCount × Δi·Δj·Δk, cubic millimetres. */
  volumeMm3: number;
  /** Mean of its voxel centres, LPS, millimetres. */
  centroidLps: Vec3;
  /**
   * Sides of its voxels' bounding box along the grid axes i, j, k, millimetres: the cells around
   * the extreme voxel centres, so a single voxel measures Δi × Δj × Δk.
   */
  extentMm: Vec3;
  /** Axis-aligned LPS box around the eight corners of that bounding box, millimetres. */
  boxLps: { min: Vec3; max: Vec3 };
}

/**
 * Measures the label values asked for in one pass over `labelMap` (index i + nx·(j + ny·k) on
 * `geometry`'s grid). A label value with no voxel is left out of the answer.
 */
export function measureLabels(
  labelMap: ArrayLike<number>,
  geometry: VolumeGeometry,
  labelValues: readonly number[],
): Map<number, LabelGeometry> {
  const slotOf = new Map<number, number>();
  labelValues.forEach((value) => {
    if (!slotOf.has(value)) slotOf.set(value, slotOf.size);
  });
  const slots = slotOf.size;
  const slotOfValue = new Int32Array(65_536).fill(-1);
  for (const [value, slot] of slotOf) {
    if (value >= 1 && value < 65_536) slotOfValue[value] = slot;
  }
  const counts = new Float64Array(slots);
  const sums = new Float64Array(3 * slots);
  const low = new Int32Array(3 * slots).fill(2 ** 30);
  const high = new Int32Array(3 * slots).fill(-1);
  const [nx, ny, nz] = geometry.dimensions;
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        const value = labelMap[index];
        if (value === 0) continue;
        const slot = slotOfValue[value];
        if (slot < 0) continue;
        counts[slot]++;
        const at = 3 * slot;
        sums[at] += i;
        sums[at + 1] += j;
        sums[at + 2] += k;
        if (i < low[at]) low[at] = i;
        if (i > high[at]) high[at] = i;
        if (j < low[at + 1]) low[at + 1] = j;
        if (j > high[at + 1]) high[at + 1] = j;
        if (k < low[at + 2]) low[at + 2] = k;
        if (k > high[at + 2]) high[at + 2] = k;
      }
    }
  }
  const [wi, wj, wk] = geometry.spacingMm;
  const measured = new Map<number, LabelGeometry>();
  for (const [labelValue, slot] of slotOf) {
    const count = counts[slot];
    if (count === 0) continue;
    const at = 3 * slot;
    const mean: Vec3 = [sums[at] / count, sums[at + 1] / count, sums[at + 2] / count];
    const lowCell: Vec3 = [low[at] - 0.5, low[at + 1] - 0.5, low[at + 2] - 0.5];
    const highCell: Vec3 = [high[at] + 0.5, high[at + 1] + 0.5, high[at + 2] + 0.5];
    measured.set(labelValue, {
      labelValue,
      voxelCount: count,
      volumeMm3: count * wi * wj * wk,
      centroidLps: voxelToLps(geometry, mean),
      extentMm: [
        (highCell[0] - lowCell[0]) * wi,
        (highCell[1] - lowCell[1]) * wj,
        (highCell[2] - lowCell[2]) * wk,
      ],
      boxLps: lpsBoxOfCells(geometry, lowCell, highCell),
    });
  }
  return measured;
}

/** The axis-aligned LPS box of the eight corners of a box of continuous voxel indices. */
function lpsBoxOfCells(
  geometry: VolumeGeometry,
  low: Readonly<Vec3>,
  high: Readonly<Vec3>,
): { min: Vec3; max: Vec3 } {
  const min: Vec3 = [Infinity, Infinity, Infinity];
  const max: Vec3 = [-Infinity, -Infinity, -Infinity];
  for (const i of [low[0], high[0]]) {
    for (const j of [low[1], high[1]]) {
      for (const k of [low[2], high[2]]) {
        const corner = voxelToLps(geometry, [i, j, k]);
        for (let axis = 0; axis < 3; axis++) {
          min[axis] = Math.min(min[axis], corner[axis]);
          max[axis] = Math.max(max[axis], corner[axis]);
        }
      }
    }
  }
  return { min, max };
}
