/**
 * The maths of a slice view's parallel camera, apart from any rendering: where a screen pixel
 * lies in the patient (LPS, millimetres) and back, which slice a point falls on, zoom and pan.
 * Screen coordinates are CSS pixels from the view's top-left corner, y downwards.
 */
import { lpsToVoxel, vector3, voxelToLps, type Vec3, type VolumeGeometry } from '@emberline/shared';
import type { SliceAxes, VoxelAxis } from './slice-axes';

export interface SliceViewport {
  widthPx: number;
  heightPx: number;
  /** The patient point at the centre of the view (only its in-plane position matters). */
  centreLps: Vec3;
  /** Size of one CSS pixel on the plane, millimetres. */
  mmPerPixel: number;
}

/** A screen position with its distance from the shown plane along the normal (mm, + behind). */
export interface ScreenPoint {
  x: number;
  y: number;
  depthMm: number;
}

/** Index of the slice (along `axis`) nearest a point, kept on the grid. */
export function sliceIndexAt(
  geometry: VolumeGeometry,
  axis: VoxelAxis,
  pointLps: Readonly<Vec3>,
): number {
  const voxel = lpsToVoxel(geometry, pointLps);
  return Math.min(geometry.dimensions[axis] - 1, Math.max(0, Math.round(voxel[axis])));
}

/** A point of slice `index` along `axis`: the centre of the voxel (0, 0, 0) moved to it. */
export function slicePlanePoint(geometry: VolumeGeometry, axis: VoxelAxis, index: number): Vec3 {
  const voxel: Vec3 = [0, 0, 0];
  voxel[axis] = index;
  return voxelToLps(geometry, voxel);
}

/**
 * The point moved by `steps` slices along `axis`, onto a slice centre and kept on the grid;
 * its position within the slice is unchanged.
 */
export function stepSlices(
  geometry: VolumeGeometry,
  axis: VoxelAxis,
  pointLps: Readonly<Vec3>,
  steps: number,
): Vec3 {
  const voxel = lpsToVoxel(geometry, pointLps);
  const last = geometry.dimensions[axis] - 1;
  voxel[axis] = Math.min(last, Math.max(0, Math.round(voxel[axis]) + steps));
  return voxelToLps(geometry, voxel);
}

/** The patient point under a screen position, on the plane through `planePointLps`. */
export function screenToLps(
  axes: SliceAxes,
  viewport: SliceViewport,
  planePointLps: Readonly<Vec3>,
  x: number,
  y: number,
): Vec3 {
  const onScreen = vector3.addScaled(
    vector3.addScaled(
      viewport.centreLps,
      axes.rightLps,
      (x - viewport.widthPx / 2) * viewport.mmPerPixel,
    ),
    axes.upLps,
    (viewport.heightPx / 2 - y) * viewport.mmPerPixel,
  );
  const depth = vector3.dot(vector3.subtract(planePointLps, onScreen), axes.normalLps);
  return vector3.addScaled(onScreen, axes.normalLps, depth);
}

/** Where a patient point shows on screen, and how far it lies behind the shown plane. */
export function lpsToScreen(
  axes: SliceAxes,
  viewport: SliceViewport,
  planePointLps: Readonly<Vec3>,
  pointLps: Readonly<Vec3>,
): ScreenPoint {
  const offset = vector3.subtract(pointLps, viewport.centreLps);
  return {
    x: viewport.widthPx / 2 + vector3.dot(offset, axes.rightLps) / viewport.mmPerPixel,
    y: viewport.heightPx / 2 - vector3.dot(offset, axes.upLps) / viewport.mmPerPixel,
    depthMm: vector3.dot(vector3.subtract(pointLps, planePointLps), axes.normalLps),
  };
}

/** The eight outer voxel centres of a grid, LPS. */
function gridCorners(geometry: VolumeGeometry): Vec3[] {
  const [nx, ny, nz] = geometry.dimensions;
  const corners: Vec3[] = [];
  for (const i of [0, nx - 1]) {
    for (const j of [0, ny - 1]) {
      for (const k of [0, nz - 1]) corners.push(voxelToLps(geometry, [i, j, k]));
    }
  }
  return corners;
}

/**
 * A viewport showing the whole grid, centred, with a margin of `marginShare` of the view: the
 * grid's extent across the screen axes (voxel centres, widened by one voxel) fitted into the
 * view's width and height.
 */
export function fittedViewport(
  axes: SliceAxes,
  geometry: VolumeGeometry,
  widthPx: number,
  heightPx: number,
  marginShare = 0.04,
): SliceViewport {
  const corners = gridCorners(geometry);
  const extent = (direction: Vec3) => {
    const values = corners.map((corner) => vector3.dot(corner, direction));
    return { low: Math.min(...values), high: Math.max(...values) };
  };
  const across = extent(axes.rightLps);
  const along = extent(axes.upLps);
  const voxelMm = Math.max(...geometry.spacingMm);
  const widthMm = across.high - across.low + voxelMm;
  const heightMm = along.high - along.low + voxelMm;
  const usable = 1 - 2 * marginShare;
  const mmPerPixel = Math.max(
    widthMm / Math.max(1, widthPx * usable),
    heightMm / Math.max(1, heightPx * usable),
  );
  const centre = corners.reduce<Vec3>((sum, corner) => vector3.add(sum, corner), [0, 0, 0]);
  return { widthPx, heightPx, centreLps: vector3.scale(centre, 1 / corners.length), mmPerPixel };
}

/** Zoom by `factor` (> 1 enlarges) keeping the point under (x, y) where it is. */
export function zoomedViewport(
  axes: SliceAxes,
  viewport: SliceViewport,
  factor: number,
  x: number,
  y: number,
): SliceViewport {
  const mmPerPixel = viewport.mmPerPixel / factor;
  const dx = (x - viewport.widthPx / 2) * (viewport.mmPerPixel - mmPerPixel);
  const dy = (viewport.heightPx / 2 - y) * (viewport.mmPerPixel - mmPerPixel);
  const centreLps = vector3.addScaled(
    vector3.addScaled(viewport.centreLps, axes.rightLps, dx),
    axes.upLps,
    dy,
  );
  return { ...viewport, centreLps, mmPerPixel };
}

/** Pan: the picture follows the pointer by (dx, dy) CSS pixels. */
export function pannedViewport(
  axes: SliceAxes,
  viewport: SliceViewport,
  deltaXPx: number,
  deltaYPx: number,
): SliceViewport {
  const centreLps = vector3.addScaled(
    vector3.addScaled(viewport.centreLps, axes.rightLps, -deltaXPx * viewport.mmPerPixel),
    axes.upLps,
    deltaYPx * viewport.mmPerPixel,
  );
  return { ...viewport, centreLps };
}

/** The same view in a resized box: centre and scale kept, so the picture does not jump. */
export function resizedViewport(
  viewport: SliceViewport,
  widthPx: number,
  heightPx: number,
): SliceViewport {
  return { ...viewport, widthPx, heightPx };
}
