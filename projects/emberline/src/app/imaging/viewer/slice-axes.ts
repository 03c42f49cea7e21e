/**
 * Which voxel axis each slice view cuts across, and how the view is turned on screen. A slice
 * view shows one plane of the series' own grid (no resampling), so an oblique series shows
 * slightly oblique planes; the view tells the angle. Every vector here is LPS, unit length.
 */
import { vector3, type Vec3, type VolumeGeometry } from '@emberline/shared';

export type SliceViewName = 'axial' | 'coronal' | 'sagittal';
export const sliceViewNames: readonly SliceViewName[] = ['axial', 'coronal', 'sagittal'];
export type VoxelAxis = 0 | 1 | 2;

export interface SliceAxes {
  view: SliceViewName;
  /** The voxel axis (0 i, 1 j, 2 k) held constant on the view's plane. */
  voxelAxis: VoxelAxis;
  /** Normal of the plane, pointing away from the viewer (into the screen). */
  normalLps: Vec3;
  /** Screen up and screen right on the plane; right = normal × up. */
  upLps: Vec3;
  rightLps: Vec3;
  /** Angle between the plane's normal and the anatomical one, degrees. */
  obliquityDeg: number;
}

/**
 * The anatomical planes as radiologists read them (common practice): axial seen from the feet
 * with anterior up, coronal seen from the front with the head up, both with the patient's
 * right on the screen's left; sagittal seen from the patient's left, anterior on the left.
 * `normal` points from the viewer into the screen.
 */
const anatomical: Record<SliceViewName, { normal: Vec3; up: Vec3 }> = {
  axial: { normal: [0, 0, 1], up: [0, -1, 0] },
  coronal: { normal: [0, 1, 0], up: [0, 0, 1] },
  sagittal: { normal: [-1, 0, 0], up: [0, 0, 1] },
};

const permutations: readonly [VoxelAxis, VoxelAxis, VoxelAxis][] = [
  [0, 1, 2],
  [0, 2, 1],
  [1, 0, 2],
  [1, 2, 0],
  [2, 0, 1],
  [2, 1, 0],
];

/** Unit normal of the grid plane on which voxel axis `axis` is constant. */
export function gridPlaneNormal(geometry: VolumeGeometry, axis: VoxelAxis): Vec3 {
  const first = geometry.direction[(axis + 1) % 3];
  const second = geometry.direction[(axis + 2) % 3];
  return vector3.normalize(vector3.cross(first, second));
}

/**
 * The axes of the three slice views for a grid: each anatomical plane gets the voxel axis
 * whose grid plane lies closest to it (the assignment with the largest summed |cos| of the
 * normals), its normal turned to the anatomical side, and the anatomical up projected onto it.
 */
export function sliceAxesOf(geometry: VolumeGeometry): Record<SliceViewName, SliceAxes> {
  const normals = ([0, 1, 2] as const).map((axis) => gridPlaneNormal(geometry, axis));
  const alignment = (view: SliceViewName, axis: VoxelAxis) =>
    Math.abs(vector3.dot(normals[axis], anatomical[view].normal));
  let best = permutations[0];
  let bestScore = -Infinity;
  for (const candidate of permutations) {
    const score = sliceViewNames.reduce(
      (sum, view, index) => sum + alignment(view, candidate[index]),
      0,
    );
    if (score > bestScore + 1e-12) {
      best = candidate;
      bestScore = score;
    }
  }
  const axesOf = (view: SliceViewName, index: number): SliceAxes => {
    const voxelAxis = best[index];
    const wanted = anatomical[view];
    const cosine = vector3.dot(normals[voxelAxis], wanted.normal);
    const normalLps = vector3.scale(normals[voxelAxis], cosine < 0 ? -1 : 1);
    const upLps = projectedUp(wanted.up, normalLps);
    return {
      view,
      voxelAxis,
      normalLps,
      upLps,
      rightLps: vector3.cross(normalLps, upLps),
      obliquityDeg: (Math.acos(Math.min(1, Math.abs(cosine))) * 180) / Math.PI,
    };
  };
  return {
    axial: axesOf('axial', 0),
    coronal: axesOf('coronal', 1),
    sagittal: axesOf('sagittal', 2),
  };
}

/** The wanted up made perpendicular to the normal; another axis if they are nearly parallel. */
function projectedUp(wantedUp: Vec3, normal: Vec3): Vec3 {
  const candidates: Vec3[] = [wantedUp, [0, 0, 1], [0, -1, 0], [1, 0, 0]];
  for (const candidate of candidates) {
    const inPlane = vector3.addScaled(candidate, normal, -vector3.dot(candidate, normal));
    if (vector3.norm(inPlane) > 0.2) return vector3.normalize(inPlane);
  }
  throw new RangeError('no up direction for this plane');
}

/** Patient direction letters of LPS axes: +x left, +y posterior, +z superior (head). */
const letters: readonly [string, string][] = [
  ['R', 'L'],
  ['A', 'P'],
  ['I', 'S'],
];

/**
 * The letters of the patient directions a screen direction points to ("L", "A", "SL"…): the
 * strongest component first, then any other component above a third of the length, as the
 * orientation markers at the edges of a slice view.
 */
export function directionLetters(directionLps: Readonly<Vec3>): string {
  const parts = ([0, 1, 2] as const)
    .map((axis) => ({ axis, weight: Math.abs(directionLps[axis]) }))
    .filter((part) => part.weight > 1 / 3)
    .sort((a, b) => b.weight - a.weight);
  return parts.map(({ axis }) => letters[axis][directionLps[axis] > 0 ? 1 : 0]).join('');
}
