/**
 * Size of a simulated ablation zone (Ω ≥ 1) against its applicator's shaft: the length along
 * the shaft, the width across it and where its centre lies behind the tip — the quantities a
 * zone table states (`ZoneTableRow`).
 *
 * Measured on the zone's surface, not on whole voxels: between every pair of neighbouring voxel
 * centres with Ω on either side of the threshold, the crossing is placed by interpolating ln Ω
 * linearly (Ω grows about exponentially with temperature, and temperature about linearly across
 * one voxel), or Ω itself when the outer value is 0. Sizes then vary smoothly with the heating
 * rather than in steps of a voxel, which the calibration needs.
 */
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { cross, normalize, subtract, type Vec3 } from '../geometry/vector';
import { DAMAGE_THRESHOLD_OMEGA } from './thermal-damage';

/** Points on the zone surface, LPS millimetres, as x, y, z triples. */
export interface ZoneSurfacePoints {
  pointsLps: Float64Array;
  /** Whether the zone reaches a wall of the grid (its size is then a lower bound). */
  touchesGridWall: boolean;
}

/** The zone's size against a shaft, millimetres. */
export interface ShaftZoneSize {
  /** Extent along the shaft. */
  lengthMm: number;
  /** Largest extent across the shaft (the widest caliper perpendicular to it). */
  widthMm: number;
  /** Middle of the extent along the shaft, from the tip towards the entry; null without a zone. */
  tipOffsetMm: number | null;
  /** Whether the zone reaches a wall of the grid (the sizes are then lower bounds). */
  touchesGridWall: boolean;
}

/**
 * Points where Ω crosses `threshold` (default 1) between neighbouring voxel centres, LPS
 * millimetres; centres of zone voxels on a wall of the grid count too (and set
 * `touchesGridWall`).
 */
export function zoneSurfacePoints(
  omega: Float32Array | Float64Array,
  geometry: Readonly<VolumeGeometry>,
  threshold = DAMAGE_THRESHOLD_OMEGA,
): ZoneSurfacePoints {
  const [nx, ny, nz] = geometry.dimensions;
  if (omega.length !== nx * ny * nz) {
    throw new RangeError(`omega has ${omega.length} voxels, the grid ${nx * ny * nz}`);
  }
  const [directionI, directionJ, directionK] = geometry.direction;
  const [spacingI, spacingJ, spacingK] = geometry.spacingMm;
  const axes: Vec3[] = [
    [directionI[0] * spacingI, directionI[1] * spacingI, directionI[2] * spacingI],
    [directionJ[0] * spacingJ, directionJ[1] * spacingJ, directionJ[2] * spacingJ],
    [directionK[0] * spacingK, directionK[1] * spacingK, directionK[2] * spacingK],
  ];
  const origin = geometry.originLps;
  const logThreshold = Math.log(threshold);
  const points: number[] = [];
  let touchesGridWall = false;
  const push = (i: number, j: number, k: number) => {
    for (let axis = 0; axis < 3; axis++) {
      points.push(origin[axis] + axes[0][axis] * i + axes[1][axis] * j + axes[2][axis] * k);
    }
  };
  const strides = [1, nx, nx * ny];
  const extents = [nx, ny, nz];
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        const index = i + nx * (j + ny * k);
        const inner = omega[index];
        if (!(inner >= threshold)) continue;
        const voxel = [i, j, k];
        for (let axis = 0; axis < 3; axis++) {
          for (const side of [-1, 1]) {
            const neighbourAt = voxel[axis] + side;
            if (neighbourAt < 0 || neighbourAt >= extents[axis]) {
              touchesGridWall = true;
              push(i, j, k);
              continue;
            }
            const outer = omega[index + side * strides[axis]];
            if (outer >= threshold) continue;
            const fraction =
              outer > 0
                ? (Math.log(inner) - logThreshold) / (Math.log(inner) - Math.log(outer))
                : (inner - threshold) / (inner - outer);
            const offset = side * fraction;
            push(
              axis === 0 ? i + offset : i,
              axis === 1 ? j + offset : j,
              axis === 2 ? k + offset : k,
            );
          }
        }
      }
    }
  }
  return { pointsLps: Float64Array.from(points), touchesGridWall };
}

/** Directions across the shaft tried for the widest caliper: every 2° of a half turn. */
const CALIPER_DIRECTIONS = 90;

/**
 * Length, width and centre of the zone against the shaft from the tip towards the entry (LPS,
 * millimetres): the extent of the surface points along the shaft, the widest of their calipers
 * across it, and the middle of the extent along it, measured from the tip.
 */
export function measureZoneAlongShaft(
  surface: Readonly<ZoneSurfacePoints>,
  tipLps: Readonly<Vec3>,
  entryLps: Readonly<Vec3>,
): ShaftZoneSize {
  const points = surface.pointsLps;
  const count = points.length / 3;
  if (count === 0) {
    return { lengthMm: 0, widthMm: 0, tipOffsetMm: null, touchesGridWall: surface.touchesGridWall };
  }
  const axis = normalize(subtract(entryLps, tipLps));
  const helper: Vec3 = Math.abs(axis[0]) < 0.9 ? [1, 0, 0] : [0, 1, 0];
  const across1 = normalize(cross(axis, helper));
  const across2 = cross(axis, across1);
  let nearestMm = Infinity;
  let farthestMm = -Infinity;
  const low = new Float64Array(CALIPER_DIRECTIONS).fill(Infinity);
  const high = new Float64Array(CALIPER_DIRECTIONS).fill(-Infinity);
  const cosines = Float64Array.from({ length: CALIPER_DIRECTIONS }, (_, d) =>
    Math.cos((Math.PI * d) / CALIPER_DIRECTIONS),
  );
  const sines = Float64Array.from({ length: CALIPER_DIRECTIONS }, (_, d) =>
    Math.sin((Math.PI * d) / CALIPER_DIRECTIONS),
  );
  for (let point = 0; point < count; point++) {
    const x = points[3 * point] - tipLps[0];
    const y = points[3 * point + 1] - tipLps[1];
    const z = points[3 * point + 2] - tipLps[2];
    const along = x * axis[0] + y * axis[1] + z * axis[2];
    if (along < nearestMm) nearestMm = along;
    if (along > farthestMm) farthestMm = along;
    const u = x * across1[0] + y * across1[1] + z * across1[2];
    const v = x * across2[0] + y * across2[1] + z * across2[2];
    for (let d = 0; d < CALIPER_DIRECTIONS; d++) {
      const projection = u * cosines[d] + v * sines[d];
      if (projection < low[d]) low[d] = projection;
      if (projection > high[d]) high[d] = projection;
    }
  }
  let widthMm = 0;
  for (let d = 0; d < CALIPER_DIRECTIONS; d++) widthMm = Math.max(widthMm, high[d] - low[d]);
  return {
    lengthMm: farthestMm - nearestMm,
    widthMm,
    tipOffsetMm: (farthestMm + nearestMm) / 2,
    touchesGridWall: surface.touchesGridWall,
  };
}

/**
 * How far the zone reaches from a point in one direction, millimetres: the largest
 * projection of its surface points onto the unit `directionLps` (LPS), −Infinity without a
 * zone.
 */
export function zoneReachMm(
  surface: Readonly<ZoneSurfacePoints>,
  fromLps: Readonly<Vec3>,
  directionLps: Readonly<Vec3>,
): number {
  const unit = normalize(directionLps);
  const points = surface.pointsLps;
  let reachMm = -Infinity;
  for (let offset = 0; offset < points.length; offset += 3) {
    const projection =
      (points[offset] - fromLps[0]) * unit[0] +
      (points[offset + 1] - fromLps[1]) * unit[1] +
      (points[offset + 2] - fromLps[2]) * unit[2];
    if (projection > reachMm) reachMm = projection;
  }
  return reachMm;
}
