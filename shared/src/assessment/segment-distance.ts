/**
 * A structure kind's voxels on the whole series grid, for an exact clearance where it lies
 * beyond the reach of the assessment's crop: its boundary voxels (those with a face neighbour
 * of another kind, or on the grid's edge; only they can hold the cell nearest a point outside,
 * geometry/cell-distance.ts) found within the bounding box of the kind's labels, packed by
 * brick for `segmentApproachToCells`. Positions LPS, millimetres.
 */
import type { StructureKind } from '../api/structures';
import { packCells } from '../geometry/cell-distance';
import { lpsToVoxel, type VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import { cachedArray, type CachedArray, type DistanceFieldCache } from './distance-field-cache';
import type { LabelInventory } from './label-inventory';

const isInt32 = (value: CachedArray): value is Int32Array => value instanceof Int32Array;

/**
 * The kind's boundary voxels on the series grid, packed by brick (geometry/cell-distance.ts
 * `packCells`); cached under series + kind + labels when a cache and a series key are given.
 */
export function boundaryCellsOfKind(
  labelMap: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  inventory: LabelInventory,
  kind: StructureKind,
  cache?: DistanceFieldCache,
  seriesKey: string | null = null,
): Int32Array {
  const labels = inventory.labelsOfKind.get(kind) ?? [];
  const key = seriesKey === null ? null : `${seriesKey}|${kind}:${labels.join(',')}|cells`;
  return cachedArray(
    cache,
    key,
    () => packCells(findBoundary(labelMap, geometry, inventory, labels), geometry.dimensions),
    isInt32,
  );
}

function findBoundary(
  labelMap: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  inventory: LabelInventory,
  labels: readonly number[],
): Int32Array {
  const [nx, ny, nz] = geometry.dimensions;
  const isOfKind = new Uint8Array(65_536);
  const low: Vec3 = [Infinity, Infinity, Infinity];
  const high: Vec3 = [-Infinity, -Infinity, -Infinity];
  for (const label of labels) {
    isOfKind[label] = 1;
    const statistics = inventory.statistics.get(label);
    if (!statistics) continue;
    for (let axis = 0; axis < 3; axis++) {
      low[axis] = Math.min(low[axis], statistics.minVoxel[axis]);
      high[axis] = Math.max(high[axis], statistics.maxVoxel[axis]);
    }
  }
  const found: number[] = [];
  const slab = nx * ny;
  for (let k = low[2]; k <= high[2]; k++) {
    for (let j = low[1]; j <= high[1]; j++) {
      for (let i = low[0]; i <= high[0]; i++) {
        const index = i + nx * (j + ny * k);
        if (isOfKind[labelMap[index]] === 0) continue;
        const isBoundary =
          i === 0 ||
          j === 0 ||
          k === 0 ||
          i === nx - 1 ||
          j === ny - 1 ||
          k === nz - 1 ||
          isOfKind[labelMap[index - 1]] === 0 ||
          isOfKind[labelMap[index + 1]] === 0 ||
          isOfKind[labelMap[index - nx]] === 0 ||
          isOfKind[labelMap[index + nx]] === 0 ||
          isOfKind[labelMap[index - slab]] === 0 ||
          isOfKind[labelMap[index + slab]] === 0;
        if (isBoundary) found.push(index);
      }
    }
  }
  return Int32Array.from(found);
}

/**
 * The part of the segment entry → tip (LPS, millimetres) over the grid's voxels (continuous
 * indices −½ … n − ½ on each axis), as fractions [from, to] of the way from entry to tip; null
 * when the segment misses the grid.
 */
export function segmentOnGrid(
  geometry: VolumeGeometry,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
): [number, number] | null {
  const from = lpsToVoxel(geometry, entryLps);
  const to = lpsToVoxel(geometry, tipLps);
  let low = 0;
  let high = 1;
  for (let axis = 0; axis < 3; axis++) {
    const start = from[axis];
    const step = to[axis] - start;
    const lowest = -0.5;
    const highest = geometry.dimensions[axis] - 0.5;
    if (step === 0) {
      if (start < lowest || start > highest) return null;
      continue;
    }
    const a = (lowest - start) / step;
    const b = (highest - start) / step;
    low = Math.max(low, Math.min(a, b));
    high = Math.min(high, Math.max(a, b));
  }
  return low <= high ? [low, high] : null;
}
