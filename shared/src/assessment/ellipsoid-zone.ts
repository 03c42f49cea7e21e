/**
 * The zone-table ablation zone as an ellipsoid about the shaft (applicator-profiles.ts): its
 * long axis along the applicator from entry to tip, `zoneLengthMm` long, `zoneWidthMm` across
 * (a spheroid), centred `tipOffsetMm` behind the tip towards the entry. Rasterised onto a voxel
 * grid by voxel centres: a voxel belongs to the zone when its centre lies inside.
 * Positions LPS, millimetres.
 */
import { voxelCount, type VolumeGeometry } from '../geometry/patient-geometry';
import { addScaled, dot, normalize, subtract, type Vec3 } from '../geometry/vector';
import { extentOfLpsBox, isExtentInsideGrid, type VoxelExtent } from './voxel-extent';
import type { ZoneDimensions } from './zone-table';

/** An ellipsoid of revolution about `axisLps`. */
export interface EllipsoidZone {
  /** Centre, LPS, millimetres. */
  centreLps: Vec3;
  /** Unit vector along the shaft, from the entry towards the tip, LPS. */
  axisLps: Vec3;
  /** Half the zone's length along the shaft, mm. */
  semiAxisAlongMm: number;
  /** Half the zone's width across the shaft, mm. */
  semiAxisAcrossMm: number;
}

/**
 * The table zone of an applicator from `entryLps` to `tipLps` (LPS, millimetres) with the
 * zone table's dimensions. Throws a RangeError when entry and tip coincide (no direction).
 */
export function tableZoneEllipsoid(
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
  dimensions: ZoneDimensions,
): EllipsoidZone {
  const axisLps = normalize(subtract(tipLps, entryLps));
  return {
    centreLps: addScaled(tipLps, axisLps, -dimensions.tipOffsetMm),
    axisLps,
    semiAxisAlongMm: dimensions.zoneLengthMm / 2,
    semiAxisAcrossMm: dimensions.zoneWidthMm / 2,
  };
}

/** Whether a point (LPS, millimetres) lies inside the ellipsoid or on its surface. */
export function ellipsoidContains(zone: EllipsoidZone, pointLps: Readonly<Vec3>): boolean {
  const offset = subtract(pointLps, zone.centreLps);
  const along = dot(offset, zone.axisLps);
  const acrossSquared = Math.max(0, dot(offset, offset) - along * along);
  return (
    (along * along) / zone.semiAxisAlongMm ** 2 + acrossSquared / zone.semiAxisAcrossMm ** 2 <= 1
  );
}

/**
 * The smallest axis-aligned LPS box holding the ellipsoid, millimetres: along a patient axis e
 * its half extent is √(a²(u·e)² + b²(1 − (u·e)²)) for semi-axes a along u and b across.
 */
export function ellipsoidBoundsLps(zone: EllipsoidZone): { minLps: Vec3; maxLps: Vec3 } {
  const a = zone.semiAxisAlongMm;
  const b = zone.semiAxisAcrossMm;
  const half = zone.axisLps.map((component) =>
    Math.sqrt(a * a * component * component + b * b * (1 - component * component)),
  );
  return {
    minLps: [0, 1, 2].map((axis) => zone.centreLps[axis] - half[axis]) as Vec3,
    maxLps: [0, 1, 2].map((axis) => zone.centreLps[axis] + half[axis]) as Vec3,
  };
}

/** The voxel extent (continuous indices on `geometry`) that can hold the ellipsoid. */
export function ellipsoidVoxelExtent(zone: EllipsoidZone, geometry: VolumeGeometry): VoxelExtent {
  const { minLps, maxLps } = ellipsoidBoundsLps(zone);
  return extentOfLpsBox(geometry, minLps, maxLps);
}

/** Whether the whole ellipsoid lies within the grid (else its rasterised volume is cut). */
export function isEllipsoidInsideGrid(zone: EllipsoidZone, geometry: VolumeGeometry): boolean {
  return isExtentInsideGrid(ellipsoidVoxelExtent(zone, geometry), geometry);
}

/** The analytic volume 4/3·π·a·b², millilitres. */
export function ellipsoidVolumeMl(zone: EllipsoidZone): number {
  return ((4 / 3) * Math.PI * zone.semiAxisAlongMm * zone.semiAxisAcrossMm ** 2) / 1000;
}

/**
 * The union of the ellipsoids on the grid of `geometry`: 1 where a voxel centre lies inside at
 * least one of them, else 0 (index i + nx·(j + ny·k)). Only the voxels an ellipsoid's bounding
 * box can reach are tested.
 */
export function rasteriseEllipsoids(
  zones: readonly EllipsoidZone[],
  geometry: VolumeGeometry,
): Uint8Array {
  const mask = new Uint8Array(voxelCount(geometry.dimensions));
  for (const zone of zones) paintEllipsoid(mask, zone, geometry);
  return mask;
}

function paintEllipsoid(mask: Uint8Array, zone: EllipsoidZone, geometry: VolumeGeometry): void {
  const [nx, ny] = geometry.dimensions;
  const extent = ellipsoidVoxelExtent(zone, geometry);
  const low = extent.min.map((value) => Math.max(0, Math.floor(value)));
  const high = extent.max.map((value, axis) =>
    Math.min(geometry.dimensions[axis] - 1, Math.ceil(value)),
  );
  if (low.some((value, axis) => value > high[axis])) return;
  const [x, y, z] = geometry.direction;
  const [spacingI, spacingJ, spacingK] = geometry.spacingMm;
  // Offsets from the centre, in the frame of the shaft: along u, and the squared length.
  const origin = subtract(geometry.originLps, zone.centreLps);
  const u = zone.axisLps;
  const stepI = [x[0] * spacingI, x[1] * spacingI, x[2] * spacingI];
  const stepJ = [y[0] * spacingJ, y[1] * spacingJ, y[2] * spacingJ];
  const stepK = [z[0] * spacingK, z[1] * spacingK, z[2] * spacingK];
  const inverseAlong = 1 / zone.semiAxisAlongMm ** 2;
  const inverseAcross = 1 / zone.semiAxisAcrossMm ** 2;
  for (let k = low[2]; k <= high[2]; k++) {
    for (let j = low[1]; j <= high[1]; j++) {
      const rowX = origin[0] + stepJ[0] * j + stepK[0] * k;
      const rowY = origin[1] + stepJ[1] * j + stepK[1] * k;
      const rowZ = origin[2] + stepJ[2] * j + stepK[2] * k;
      const rowOffset = nx * (j + ny * k);
      for (let i = low[0]; i <= high[0]; i++) {
        const px = rowX + stepI[0] * i;
        const py = rowY + stepI[1] * i;
        const pz = rowZ + stepI[2] * i;
        const along = px * u[0] + py * u[1] + pz * u[2];
        const acrossSquared = px * px + py * py + pz * pz - along * along;
        if (along * along * inverseAlong + acrossSquared * inverseAcross <= 1) {
          mask[rowOffset + i] = 1;
        }
      }
    }
  }
}
