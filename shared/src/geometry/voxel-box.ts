/**
 * An axis-aligned box of voxels inside a grid: the crop on which a distance field or a
 * simulation is computed.
 */
import { voxelToLps, type GridDimensions, type VolumeGeometry } from './patient-geometry';

/** Voxels `start[a]` to `start[a] + size[a] − 1` on each axis a; voxel indices (i, j, k). */
export interface VoxelBox {
  /** First voxel of the box, voxel indices (i column, j row, k slice). */
  start: [number, number, number];
  /** Extent of the box in voxels along i, j and k. */
  size: [number, number, number];
}

/** The box covering a whole grid of the given dimensions [columns, rows, slices]. */
export function wholeGridBox(dimensions: Readonly<GridDimensions>): VoxelBox {
  return { start: [0, 0, 0], size: [dimensions[0], dimensions[1], dimensions[2]] };
}

/**
 * Throws a RangeError unless the box has integer bounds, at least one voxel along each axis,
 * and lies inside a grid of the given dimensions [columns, rows, slices].
 */
export function checkBoxInsideGrid(box: VoxelBox, dimensions: Readonly<GridDimensions>): void {
  for (let axis = 0; axis < 3; axis++) {
    const start = box.start[axis];
    const size = box.size[axis];
    const isInside =
      Number.isInteger(start) &&
      Number.isInteger(size) &&
      start >= 0 &&
      size >= 1 &&
      start + size <= dimensions[axis];
    if (!isInside) {
      throw new RangeError(
        `box [${box.start.join(', ')}] + [${box.size.join(', ')}] does not fit a grid of ` +
          `${dimensions.join(' × ')} voxels`,
      );
    }
  }
}

/**
 * The geometry of a box's own grid, whose voxel (0, 0, 0) is the box's first voxel: same
 * spacing and directions, origin moved to that voxel's centre (LPS, millimetres).
 */
export function boxGeometry(geometry: VolumeGeometry, box: VoxelBox): VolumeGeometry {
  checkBoxInsideGrid(box, geometry.dimensions);
  return {
    dimensions: [box.size[0], box.size[1], box.size[2]],
    spacingMm: [geometry.spacingMm[0], geometry.spacingMm[1], geometry.spacingMm[2]],
    originLps: voxelToLps(geometry, box.start),
    direction: [[...geometry.direction[0]], [...geometry.direction[1]], [...geometry.direction[2]]],
  };
}
