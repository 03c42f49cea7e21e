/**
 * The crops of the series grid an assessment works on, boxes of voxels padded by margins in
 * millimetres: the path crop around the applicator paths, on which the clearance fields are
 * computed, and the zone crop around the zones, the tumours they treat and the vessels beside
 * them. Bounds are snapped outwards to multiples of `CROP_SNAP_VOXELS` so that a plan moved by
 * a few millimetres usually keeps its crops, and their distance fields stay in the cache.
 */
import { boxGeometry, type VoxelBox } from '../geometry/voxel-box';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import type { DistanceFieldCache } from './distance-field-cache';
import type { CropContext } from './kind-fields';
import type { LabelInventory } from './label-inventory';
import type { VoxelExtent } from './voxel-extent';

/** Crop bounds are multiples of this many voxels along each axis (clamped to the grid). */
export const CROP_SNAP_VOXELS = 8;

/** Something the crop must hold, with the padding it needs around it. */
export interface CropRegion {
  /** Continuous voxel indices on the series grid. */
  extent: VoxelExtent;
  /** Padding on every side, mm. */
  marginMm: number;
}

/**
 * The smallest snapped box of the series grid holding every region padded by its margin (along
 * each grid axis, margin / spacing voxels), clamped to the grid; null when no part of it lies
 * on the grid. A point of a region lies at least its margin from every face of the box, except
 * where the box stops at the edge of the grid.
 */
export function cropBoxAround(
  geometry: VolumeGeometry,
  regions: readonly CropRegion[],
  snapVoxels = CROP_SNAP_VOXELS,
): VoxelBox | null {
  if (!(Number.isInteger(snapVoxels) && snapVoxels >= 1)) {
    throw new RangeError(`snapVoxels must be a positive whole number, got ${snapVoxels}`);
  }
  const start: [number, number, number] = [0, 0, 0];
  const size: [number, number, number] = [0, 0, 0];
  for (let axis = 0; axis < 3; axis++) {
    const spacing = geometry.spacingMm[axis];
    let low = Infinity;
    let high = -Infinity;
    for (const region of regions) {
      low = Math.min(low, region.extent.min[axis] - region.marginMm / spacing);
      high = Math.max(high, region.extent.max[axis] + region.marginMm / spacing);
    }
    const extent = geometry.dimensions[axis];
    const first = Math.max(0, Math.floor(Math.floor(low) / snapVoxels) * snapVoxels);
    const end = Math.min(extent, Math.ceil((Math.ceil(high) + 1) / snapVoxels) * snapVoxels);
    if (!(end > first)) return null;
    start[axis] = first;
    size[axis] = end - first;
  }
  return { start, size };
}

/** The label values of the box, copied out of the series' label map (i fastest in the box). */
export function cropLabels(
  labelMap: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  box: VoxelBox,
): Uint8Array | Uint16Array {
  const [nx, ny] = geometry.dimensions;
  const [bx, by, bz] = box.size;
  const labels =
    labelMap instanceof Uint8Array ? new Uint8Array(bx * by * bz) : new Uint16Array(bx * by * bz);
  for (let z = 0; z < bz; z++) {
    for (let y = 0; y < by; y++) {
      const from = box.start[0] + nx * (box.start[1] + y + ny * (box.start[2] + z));
      labels.set(labelMap.subarray(from, from + bx), bx * (y + by * z));
    }
  }
  return labels;
}

/** Kind codes (label-inventory.ts) of the cropped labels. */
export function kindCodesOf(
  labels: Uint8Array | Uint16Array,
  kindCodeOfLabel: Uint8Array,
): Uint8Array {
  const codes = new Uint8Array(labels.length);
  for (let index = 0; index < labels.length; index++) codes[index] = kindCodeOfLabel[labels[index]];
  return codes;
}

/** A crop ready for work: its context (grid, kind codes, cache) and its label values. */
export interface PreparedCrop {
  context: CropContext;
  /** Label values of the crop, i fastest. */
  labels: Uint8Array | Uint16Array;
}

/** Cuts the box out of the series' label map and sets up its context. */
export function prepareCrop(
  labelMap: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  box: VoxelBox,
  inventory: LabelInventory,
  cache: DistanceFieldCache,
  seriesKey: string,
): PreparedCrop {
  const labels = cropLabels(labelMap, geometry, box);
  return {
    context: {
      seriesKey,
      cache,
      geometry: boxGeometry(geometry, box),
      box,
      kindCodes: kindCodesOf(labels, inventory.kindCodeOfLabel),
      inventory,
    },
    labels,
  };
}
