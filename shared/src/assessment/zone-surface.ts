/**
 * How margins and gaps read a zone's surface from the voxels of the crop: the local margin
 * (signed distance to the zone's surface, positive inside) at the centre of a voxel face, and
 * bounds of it over a voxel's cell, or over the cell widened by whole voxels on every side —
 * the room the conservative bounds give a labelled surface that may lie a voxel farther out.
 *
 * - The table zone is read analytically: the union of the applicators' spheroids, each point's
 *   margin the largest of its exact signed distances to them (geometry/spheroid-distance.ts).
 *   That is exact outside the zones and for one zone; where zones overlap it can only read low
 *   (the ball inside one zone lies in the union), so it errs cautiously. A spheroid's signed
 *   distance is concave (the distance to a convex set is convex; inside, the distance to its
 *   complement is concave), so its lowest value over a box is at a corner; the tangent plane
 *   at the nearest surface point bounds it from above: s(x) ≤ s(c) + n·(c − x).
 * - Any other zone (a mask: the physics model's) is read from its signed field on the crop
 *   (zone-field.ts), linearised about the voxel centre along the field's gradient.
 *
 * Crop voxel indices (i, j, k) on the crop's grid; distances in millimetres.
 */
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { spheroidDistance } from '../geometry/spheroid-distance';
import { dot, type Vec3 } from '../geometry/vector';
import { ellipsoidVoxelExtent, type EllipsoidZone } from './ellipsoid-zone';
import type { VoxelExtent } from './voxel-extent';
import { fieldIndex, marginAt, unitGradient, type ZoneField } from './zone-field';

/** Readings of one zone's surface at the crop's voxels. */
export interface ZoneSurface {
  /**
   * Local margin (mm, positive inside the zone) at the centre of the face of voxel (i, j, k)
   * on the `side` (+1 or −1) of grid axis `axis` (0 i, 1 j, 2 k).
   */
  faceMarginMm(i: number, j: number, k: number, axis: number, side: number): number;
  /** A lower bound of the margin over the voxel's cell widened by `widenVoxels` a side, mm. */
  lowestOverCellMm(i: number, j: number, k: number, widenVoxels: number): number;
  /**
   * Upper bounds of the margin over the voxel's cell and over the cell widened by a voxel, mm:
   * the margin at the centre plus the cell's reach along the direction the margin changes
   * fastest, Σ |nₐ|·wₐ/2, once or three times (the tangent plane bounds a spheroid's concave
   * margin from above; a mask zone's is read linearly). Negated, the gaps from outside.
   */
  highestOverCells(i: number, j: number, k: number): { cellMm: number; widenedCellMm: number };
  /** Whether the voxel lies where the surface can be read. */
  covers(i: number, j: number, k: number): boolean;
  /**
   * The crop voxels (inclusive index ranges, clamped to the crop) holding every point within
   * `reachMm` of the zone: beyond them a voxel lies farther than that outside it.
   */
  voxelsWithin(reachMm: number): VoxelExtent;
}

/** The table zone, read analytically from its spheroids on the crop's grid. */
export function ellipsoidZoneSurface(
  zones: readonly EllipsoidZone[],
  cropGeometry: VolumeGeometry,
): ZoneSurface {
  if (zones.length === 0) throw new RangeError('a table zone needs at least one ellipsoid');
  const { spacingMm, direction, originLps } = cropGeometry;
  const pointAt = (i: number, j: number, k: number): Vec3 => {
    const point: Vec3 = [originLps[0], originLps[1], originLps[2]];
    const steps = [i * spacingMm[0], j * spacingMm[1], k * spacingMm[2]];
    for (let axis = 0; axis < 3; axis++) {
      for (let component = 0; component < 3; component++) {
        point[component] += direction[axis][component] * steps[axis];
      }
    }
    return point;
  };
  const distanceTo = (zone: EllipsoidZone, point: Vec3) =>
    spheroidDistance(
      point,
      zone.centreLps,
      zone.axisLps,
      zone.semiAxisAlongMm,
      zone.semiAxisAcrossMm,
    );
  return {
    faceMarginMm(i, j, k, axis, side) {
      const half = side / 2;
      const point = pointAt(
        axis === 0 ? i + half : i,
        axis === 1 ? j + half : j,
        axis === 2 ? k + half : k,
      );
      let marginMm = -Infinity;
      for (const zone of zones) marginMm = Math.max(marginMm, distanceTo(zone, point).signedMm);
      return marginMm;
    },
    lowestOverCellMm(i, j, k, widenVoxels) {
      const half = 0.5 + widenVoxels;
      const corners: Vec3[] = [];
      for (let corner = 0; corner < 8; corner++) {
        corners.push(
          pointAt(
            i + (corner & 1 ? half : -half),
            j + (corner & 2 ? half : -half),
            k + (corner & 4 ? half : -half),
          ),
        );
      }
      let marginMm = -Infinity;
      for (const zone of zones) {
        let lowestMm = Infinity;
        for (const corner of corners) {
          lowestMm = Math.min(lowestMm, distanceTo(zone, corner).signedMm);
        }
        marginMm = Math.max(marginMm, lowestMm);
      }
      return marginMm;
    },
    highestOverCells(i, j, k) {
      const centre = pointAt(i, j, k);
      // The union's margin is the largest of the zones' (module note): bound each one's.
      let cellMm = -Infinity;
      let widenedCellMm = -Infinity;
      for (const zone of zones) {
        const found = distanceTo(zone, centre);
        // Reach of the cell along the normal: Σ |n·eₐ|·wₐ/2.
        let reachMm = 0;
        for (let axis = 0; axis < 3; axis++) {
          reachMm += (Math.abs(dot(found.outwardNormal, direction[axis])) * spacingMm[axis]) / 2;
        }
        cellMm = Math.max(cellMm, found.signedMm + reachMm);
        widenedCellMm = Math.max(widenedCellMm, found.signedMm + 3 * reachMm);
      }
      return { cellMm, widenedCellMm };
    },
    covers: () => true,
    voxelsWithin(reachMm) {
      const extents = zones.map((zone) => ellipsoidVoxelExtent(zone, cropGeometry));
      return clampedExtent(
        [0, 1, 2].map((axis) => Math.min(...extents.map((extent) => extent.min[axis]))) as Vec3,
        [0, 1, 2].map((axis) => Math.max(...extents.map((extent) => extent.max[axis]))) as Vec3,
        reachMm,
        cropGeometry,
      );
    },
  };
}

/** An extent (continuous indices) widened by `reachMm` and clamped to the grid's voxels. */
function clampedExtent(
  min: Readonly<Vec3>,
  max: Readonly<Vec3>,
  reachMm: number,
  geometry: VolumeGeometry,
): VoxelExtent {
  const low: Vec3 = [0, 0, 0];
  const high: Vec3 = [0, 0, 0];
  for (let axis = 0; axis < 3; axis++) {
    const pad = reachMm / geometry.spacingMm[axis];
    low[axis] = Math.max(0, Math.floor(min[axis] - pad));
    high[axis] = Math.min(geometry.dimensions[axis] - 1, Math.ceil(max[axis] + pad));
  }
  return { min: low, max: high };
}

/** A zone given as a mask, read from its signed field (zone-field.ts). */
export function maskZoneSurface(field: ZoneField): ZoneSurface {
  const [wi, wj, wk] = field.spacingMm;
  const halfDiagonalMm = Math.hypot(wi, wj, wk) / 2;
  /** The margin at the centre and the unit direction it grows in (grid axes), if any. */
  const readAt = (i: number, j: number, k: number) => {
    const marginMm = marginAt(field, i, j, k);
    const gradient = Number.isFinite(marginMm)
      ? unitGradient(field, fieldIndex(field, i, j, k))
      : null;
    // The margin grows into the zone, against the signed field.
    return { marginMm, inwards: gradient ? (gradient.map((value) => -value) as Vec3) : null };
  };
  const cellReachMm = (inwards: Vec3 | null, half: number) =>
    inwards === null
      ? 2 * half * halfDiagonalMm
      : half * (Math.abs(inwards[0]) * wi + Math.abs(inwards[1]) * wj + Math.abs(inwards[2]) * wk);
  return {
    faceMarginMm(i, j, k, axis, side) {
      const { marginMm, inwards } = readAt(i, j, k);
      if (!Number.isFinite(marginMm)) return marginMm;
      const offsetMm = (side * field.spacingMm[axis]) / 2;
      // Without a direction the face may lie as far down the slope as its offset.
      return inwards === null ? marginMm - Math.abs(offsetMm) : marginMm + inwards[axis] * offsetMm;
    },
    lowestOverCellMm(i, j, k, widenVoxels) {
      const { marginMm, inwards } = readAt(i, j, k);
      if (!Number.isFinite(marginMm)) return marginMm;
      return marginMm - cellReachMm(inwards, 0.5 + widenVoxels);
    },
    highestOverCells(i, j, k) {
      const { marginMm, inwards } = readAt(i, j, k);
      return {
        cellMm: marginMm + cellReachMm(inwards, 0.5),
        widenedCellMm: marginMm + cellReachMm(inwards, 1.5),
      };
    },
    covers: (i, j, k) => fieldIndex(field, i, j, k) >= 0,
    // Only the field's box can be read.
    voxelsWithin: () => ({
      min: [...field.box.start],
      max: field.box.start.map((start, axis) => start + field.box.size[axis] - 1) as Vec3,
    }),
  };
}
