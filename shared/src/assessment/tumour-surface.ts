/**
 * A tumour's surface as its label map gives it — the faces between its voxels and the voxels
 * of anything else (or the crop's edge) — read against a zone's surface (zone-surface.ts):
 * the local margin at each face's centre, the area of each face, and a conservative bound of
 * the margin as if the true surface lay up to a voxel beyond the labelled one.
 *
 * Area: each face counts with its own area, wᵦ·w꜀ for a face normal to grid axis a, so that
 * a share of the surface does not depend on how the voxels are shaped (counting voxels, a
 * 5 mm slice's top faces weigh as much as its 4 mm² side faces). The staircase of faces covers
 * a patch of true area A and unit normal n with A·(|n₁| + |n₂| + |n₃|), exact where the surface
 * runs along the grid and up to √3 times A along its diagonal; a share is a ratio, so the
 * factor cancels where it varies little over the surface.
 *
 * Crop grid; voxel indices (i, j, k); millimetres, square millimetres.
 */
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { voxelToLps } from '../geometry/patient-geometry';
import type { VoxelExtent } from './voxel-extent';
import type { ZoneSurface } from './zone-surface';

/** What a tumour's surface reads against a zone. */
export interface TumourSurfaceTally {
  voxelCount: number;
  /** Voxels whose centre lies inside the zone mask. */
  covered: number;
  /** Smallest local margin over the faces of the tumour's surface, mm. */
  minimalMarginMm: number;
  /** Smallest margin over the surface voxels' cells each widened by a voxel, mm. */
  widenedMinimalMarginMm: number;
  /** Area of the surface's faces, and of those whose local margin is under the target, mm². */
  surfaceAreaMm2: number;
  belowTargetAreaMm2: number;
  /** Surface voxel centres (x, y, z in turn, LPS) and the smallest margin of their faces. */
  surfaceLps: Float32Array;
  surfaceMarginsMm: Float32Array;
}

/** The tumour's voxels: those of `cropLabels` equal to `labelValue` within `extent`. */
export interface TumourOnCrop {
  cropGeometry: VolumeGeometry;
  cropLabels: Uint8Array | Uint16Array;
  labelValue: number;
  /** Bounding box of its voxels, crop voxel indices. */
  extent: VoxelExtent;
}

/** Neighbour offsets by face: axis, side. */
const FACES = [
  [0, -1],
  [0, 1],
  [1, -1],
  [1, 1],
  [2, -1],
  [2, 1],
] as const;

/**
 * Reads the tumour's surface against the zone surface; `zoneMask` (non-zero inside, on the
 * crop) gives the covered voxels. Throws a RangeError where a tumour voxel lies beyond the
 * zone surface's reach.
 */
export function tallyTumourSurface(
  tumour: TumourOnCrop,
  zoneMask: Uint8Array,
  zone: ZoneSurface,
  marginTargetMm: number,
): TumourSurfaceTally {
  const { cropGeometry, cropLabels, labelValue } = tumour;
  const [nx, ny, nz] = cropGeometry.dimensions;
  const spacing = cropGeometry.spacingMm;
  const low = tumour.extent.min.map((value) => Math.max(0, Math.floor(value)));
  const high = tumour.extent.max.map((value, axis) =>
    Math.min(cropGeometry.dimensions[axis] - 1, Math.ceil(value)),
  );
  const size = [0, 1, 2].map((axis) => Math.max(0, high[axis] - low[axis] + 1));
  const faceAreaMm2 = [spacing[1] * spacing[2], spacing[0] * spacing[2], spacing[0] * spacing[1]];
  // Per surface voxel of the box: its exposed faces (bit f for FACES[f]).
  const exposed = new Uint8Array(size[0] * size[1] * size[2]);
  let voxelCount = 0;
  let covered = 0;
  const surfaceVoxels: number[] = [];
  for (let k = low[2]; k <= high[2]; k++) {
    for (let j = low[1]; j <= high[1]; j++) {
      for (let i = low[0]; i <= high[0]; i++) {
        const index = i + nx * (j + ny * k);
        if (cropLabels[index] !== labelValue) continue;
        if (!zone.covers(i, j, k)) {
          throw new RangeError(`tumour label ${labelValue} reaches beyond the zone field`);
        }
        voxelCount++;
        if (zoneMask[index] !== 0) covered++;
        const bits =
          (i === 0 || cropLabels[index - 1] !== labelValue ? 1 : 0) |
          (i === nx - 1 || cropLabels[index + 1] !== labelValue ? 2 : 0) |
          (j === 0 || cropLabels[index - nx] !== labelValue ? 4 : 0) |
          (j === ny - 1 || cropLabels[index + nx] !== labelValue ? 8 : 0) |
          (k === 0 || cropLabels[index - nx * ny] !== labelValue ? 16 : 0) |
          (k === nz - 1 || cropLabels[index + nx * ny] !== labelValue ? 32 : 0);
        if (bits === 0) continue;
        const local = i - low[0] + size[0] * (j - low[1] + size[1] * (k - low[2]));
        exposed[local] = bits;
        surfaceVoxels.push(local);
      }
    }
  }
  let minimalMarginMm = Infinity;
  let surfaceAreaMm2 = 0;
  let belowTargetAreaMm2 = 0;
  const surfaceLps: number[] = [];
  const surfaceMargins: number[] = [];
  const voxelMargins = new Float64Array(surfaceVoxels.length);
  surfaceVoxels.forEach((local, slot) => {
    const x = local % size[0];
    const y = Math.floor(local / size[0]) % size[1];
    const z = Math.floor(local / (size[0] * size[1]));
    const [i, j, k] = [x + low[0], y + low[1], z + low[2]];
    let voxelMarginMm = Infinity;
    for (let face = 0; face < 6; face++) {
      if ((exposed[local] & (1 << face)) === 0) continue;
      const [axis, side] = FACES[face];
      const marginMm = zone.faceMarginMm(i, j, k, axis, side);
      const areaMm2 = faceAreaMm2[axis];
      surfaceAreaMm2 += areaMm2;
      if (marginMm < marginTargetMm) belowTargetAreaMm2 += areaMm2;
      voxelMarginMm = Math.min(voxelMarginMm, marginMm);
    }
    minimalMarginMm = Math.min(minimalMarginMm, voxelMarginMm);
    voxelMargins[slot] = voxelMarginMm;
    const lps = voxelToLps(cropGeometry, [i, j, k]);
    surfaceLps.push(lps[0], lps[1], lps[2]);
    surfaceMargins.push(voxelMarginMm);
  });
  // The margin changes by at most 1 mm per mm, and every point of a voxel's widened cell lies
  // within two voxel diagonals of its face centres: a voxel whose face margin is more than
  // that above the lowest bound found cannot lower it. Nearest the zone's surface first.
  const lipschitzReachMm = 2 * Math.hypot(spacing[0], spacing[1], spacing[2]);
  const order = Array.from(surfaceVoxels.keys()).sort((a, b) => voxelMargins[a] - voxelMargins[b]);
  let widenedMinimalMarginMm = Infinity;
  for (const slot of order) {
    if (voxelMargins[slot] - lipschitzReachMm >= widenedMinimalMarginMm) break;
    const local = surfaceVoxels[slot];
    const i = (local % size[0]) + low[0];
    const j = (Math.floor(local / size[0]) % size[1]) + low[1];
    const k = Math.floor(local / (size[0] * size[1])) + low[2];
    widenedMinimalMarginMm = Math.min(widenedMinimalMarginMm, zone.lowestOverCellMm(i, j, k, 1));
  }
  return {
    voxelCount,
    covered,
    minimalMarginMm,
    widenedMinimalMarginMm: Math.min(widenedMinimalMarginMm, minimalMarginMm),
    surfaceAreaMm2,
    belowTargetAreaMm2,
    surfaceLps: Float32Array.from(surfaceLps),
    surfaceMarginsMm: Float32Array.from(surfaceMargins),
  };
}
