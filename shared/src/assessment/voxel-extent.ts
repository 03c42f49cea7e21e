/**
 * Axis-aligned extents in continuous voxel indices (i column, j row, k slice) of things placed
 * in patient space: what a crop box must hold, and which voxels a shape can touch.
 */
import { lpsToVoxel, type VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';

/** Smallest and largest continuous voxel index along i, j and k. */
export interface VoxelExtent {
  min: Vec3;
  max: Vec3;
}

/** The extent of a set of points given in LPS, millimetres, on the grid of `geometry`. */
export function extentOfLpsPoints(
  geometry: VolumeGeometry,
  pointsLps: readonly Readonly<Vec3>[],
): VoxelExtent {
  return extentOfVoxels(pointsLps.map((point) => lpsToVoxel(geometry, point)));
}

/**
 * The extent, on the grid of `geometry`, of an axis-aligned box in LPS given by its least and
 * greatest corner (millimetres): the hull of its eight corners, so it holds the whole box on an
 * oblique grid too.
 */
export function extentOfLpsBox(
  geometry: VolumeGeometry,
  minLps: Readonly<Vec3>,
  maxLps: Readonly<Vec3>,
): VoxelExtent {
  const corners: Vec3[] = [];
  for (let corner = 0; corner < 8; corner++) {
    corners.push([
      corner & 1 ? maxLps[0] : minLps[0],
      corner & 2 ? maxLps[1] : minLps[1],
      corner & 4 ? maxLps[2] : minLps[2],
    ]);
  }
  return extentOfLpsPoints(geometry, corners);
}

/** The extent of points already in continuous voxel indices. */
export function extentOfVoxels(voxels: readonly Readonly<Vec3>[]): VoxelExtent {
  const min: Vec3 = [Infinity, Infinity, Infinity];
  const max: Vec3 = [-Infinity, -Infinity, -Infinity];
  for (const voxel of voxels) {
    for (let axis = 0; axis < 3; axis++) {
      min[axis] = Math.min(min[axis], voxel[axis]);
      max[axis] = Math.max(max[axis], voxel[axis]);
    }
  }
  return { min, max };
}

/** The smallest extent holding both. */
export function unionOfExtents(a: VoxelExtent, b: VoxelExtent): VoxelExtent {
  return extentOfVoxels([a.min, a.max, b.min, b.max]);
}

/**
 * Whether the extent lies within the grid's voxels: every point of it inside the cells of the
 * outermost voxels (−½ to n − ½ along each axis).
 */
export function isExtentInsideGrid(extent: VoxelExtent, geometry: VolumeGeometry): boolean {
  return [0, 1, 2].every(
    (axis) => extent.min[axis] >= -0.5 && extent.max[axis] <= geometry.dimensions[axis] - 0.5,
  );
}
