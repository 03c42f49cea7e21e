/**
 * Exact nearest approach of a straight path to a structure anywhere on the series grid: the
 * smallest distance from the segment entry → tip to the centres of the structure's voxels.
 * The nearest voxel to a point farther than half a voxel from a structure is always a boundary
 * voxel (one with a face neighbour outside the structure: step from an inner voxel towards the
 * point along its largest offset and the distance falls), so only those are visited. Used
 * where a clearance lies beyond the reach of the crop's distance fields.
 * Positions LPS, millimetres.
 */
import type { StructureKind } from '../api/structures';
import { lpsToVoxel, type VolumeGeometry } from '../geometry/patient-geometry';
import { distance, type Vec3 } from '../geometry/vector';
import { cachedArray, type CachedArray, type DistanceFieldCache } from './distance-field-cache';
import type { LabelInventory } from './label-inventory';

const isInt32 = (value: CachedArray): value is Int32Array => value instanceof Int32Array;

/**
 * Indices (i + nx·(j + ny·k)) of the kind's voxels that have a face neighbour of another kind
 * or lie on the grid's edge, found within the bounding box of the kind's labels; cached under
 * series + kind + labels when a cache and a series key are given.
 */
export function boundaryVoxelsOfKind(
  labelMap: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  inventory: LabelInventory,
  kind: StructureKind,
  cache?: DistanceFieldCache,
  seriesKey: string | null = null,
): Int32Array {
  const labels = inventory.labelsOfKind.get(kind) ?? [];
  const key = seriesKey === null ? null : `${seriesKey}|${kind}:${labels.join(',')}|boundary`;
  return cachedArray(
    cache,
    key,
    () => findBoundary(labelMap, geometry, inventory, labels),
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

/** Nearest approach of a segment to a set of voxel centres. */
export interface SegmentApproach {
  /** Smallest distance from the segment to a voxel centre of the set, mm. */
  distanceMm: number;
  /** Where on the segment it lies, mm from the entry. */
  atMm: number;
}

/**
 * Smallest distance from the segment entry → tip (LPS, millimetres), limited to the fractions
 * `[from, to]` of its length, to the centres of the given voxels (indices on `geometry`); null
 * for an empty set.
 */
export function nearestApproachToVoxels(
  geometry: VolumeGeometry,
  voxelIndices: Int32Array,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
  [from, to]: [number, number] = [0, 1],
): SegmentApproach | null {
  if (voxelIndices.length === 0) return null;
  const [nx, ny] = geometry.dimensions;
  const [x, y, z] = geometry.direction;
  const [si, sj, sk] = geometry.spacingMm;
  const origin = geometry.originLps;
  const direction: Vec3 = [
    tipLps[0] - entryLps[0],
    tipLps[1] - entryLps[1],
    tipLps[2] - entryLps[2],
  ];
  const lengthSquared = direction[0] ** 2 + direction[1] ** 2 + direction[2] ** 2;
  let bestSquared = Infinity;
  let bestFraction = from;
  for (let n = 0; n < voxelIndices.length; n++) {
    const index = voxelIndices[n];
    const i = index % nx;
    const j = Math.floor(index / nx) % ny;
    const k = Math.floor(index / (nx * ny));
    const px = origin[0] + x[0] * si * i + y[0] * sj * j + z[0] * sk * k - entryLps[0];
    const py = origin[1] + x[1] * si * i + y[1] * sj * j + z[1] * sk * k - entryLps[1];
    const pz = origin[2] + x[2] * si * i + y[2] * sj * j + z[2] * sk * k - entryLps[2];
    const projected =
      lengthSquared === 0
        ? from
        : (px * direction[0] + py * direction[1] + pz * direction[2]) / lengthSquared;
    const fraction = Math.min(to, Math.max(from, projected));
    const dx = px - fraction * direction[0];
    const dy = py - fraction * direction[1];
    const dz = pz - fraction * direction[2];
    const squared = dx * dx + dy * dy + dz * dz;
    if (squared < bestSquared) {
      bestSquared = squared;
      bestFraction = fraction;
    }
  }
  return {
    distanceMm: Math.sqrt(bestSquared),
    atMm: bestFraction * distance(entryLps, tipLps),
  };
}
