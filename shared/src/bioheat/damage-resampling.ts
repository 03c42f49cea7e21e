/**
 * The damage zone of a simulation read onto another grid (the assessment's crop of the series):
 * Ω interpolated trilinearly to each target voxel centre, then thresholded at Ω = 1.
 *
 * The interpolation runs on ln Ω rather than Ω. Ω grows about exponentially with temperature
 * (Arrhenius: d ln Ω/dT = Ea/(R·T²), about 0.3 per kelvin at 50 °C) and temperature about
 * linearly across one 2 mm voxel, so ln Ω is close to linear there and its interpolation places
 * the edge where the field puts it; interpolating Ω itself would push the edge outwards by up
 * to a third of a voxel (the straight line between two values of an exponential lies above
 * it). It is the same rule `zone-measurement.ts` uses to place the surface between voxel
 * centres, so the calibration and the plan read the zone alike.
 *
 * Thresholding on the model's 2 mm grid and reading back the nearest voxel moved the edge by up
 * to half a voxel diagonal (1.7 mm) either way; the interpolated edge lies within
 * `DAMAGE_INTERPOLATION_ERROR_MM` of the field's own (damage-resampling.spec.ts measures it on
 * the exact damage field of a steady point source).
 */
import {
  lpsToVoxel,
  voxelCount,
  voxelToLps,
  type VolumeGeometry,
} from '../geometry/patient-geometry';
import { subtract, type Vec3 } from '../geometry/vector';
import { DAMAGE_THRESHOLD_OMEGA } from './thermal-damage';

/**
 * Largest distance, millimetres, between the zone edge read by `resampleDamageMask` from a 2 mm
 * grid and the edge of the field it samples: the worst case measured in
 * damage-resampling.spec.ts (about 0.1 mm) with room for steeper fields.
 */
export const DAMAGE_INTERPOLATION_ERROR_MM = 0.25;

/** Ω below this counts as this (ln 0 is −∞): far below any threshold of interest. */
const OMEGA_FLOOR = 1e-30;

/**
 * A mask on `target` (1 where the interpolated Ω reaches `threshold`, default 1), from Ω on
 * `source`. Both grids LPS, millimetres, any spacing and axes; target voxel centres outside
 * the source grid (beyond its outer voxel centres by more than half a voxel) count as no damage.
 */
export function resampleDamageMask(
  omega: Float32Array | Float64Array,
  source: VolumeGeometry,
  target: VolumeGeometry,
  threshold = DAMAGE_THRESHOLD_OMEGA,
): Uint8Array {
  const [mx, my, mz] = source.dimensions;
  if (omega.length !== voxelCount(source.dimensions)) {
    throw new RangeError(
      `omega has ${omega.length} voxels, its grid ${voxelCount(source.dimensions)}`,
    );
  }
  const [cx, cy, cz] = target.dimensions;
  const mask = new Uint8Array(cx * cy * cz);
  const box = damagedBox(omega, source.dimensions, threshold);
  if (box === null) return mask;
  const logThreshold = Math.log(threshold);
  const logOmega = new Float32Array(omega.length);
  for (let index = 0; index < omega.length; index++) {
    logOmega[index] = Math.log(Math.max(OMEGA_FLOOR, omega[index]));
  }
  // The target-to-source map is affine: its origin and one column per target axis.
  const origin = lpsToVoxel(source, voxelToLps(target, [0, 0, 0]));
  const columns = (
    [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ] as Vec3[]
  ).map((unit) => subtract(lpsToVoxel(source, voxelToLps(target, unit)), origin));
  const strideY = mx;
  const strideZ = mx * my;
  let index = 0;
  for (let k = 0; k < cz; k++) {
    for (let j = 0; j < cy; j++) {
      for (let i = 0; i < cx; i++, index++) {
        const x = origin[0] + columns[0][0] * i + columns[1][0] * j + columns[2][0] * k;
        const y = origin[1] + columns[0][1] * i + columns[1][1] * j + columns[2][1] * k;
        const z = origin[2] + columns[0][2] * i + columns[1][2] * j + columns[2][2] * k;
        // Trilinear interpolation is a weighted mean of its 8 corners: it can reach the
        // threshold only in a cell with a damaged corner, i.e. within the damaged box grown
        // by one voxel.
        if (x <= box[0] - 1 || y <= box[1] - 1 || z <= box[2] - 1) continue;
        if (x >= box[3] + 1 || y >= box[4] + 1 || z >= box[5] + 1) continue;
        if (x < -0.5 || y < -0.5 || z < -0.5 || x > mx - 0.5 || y > my - 0.5 || z > mz - 0.5) {
          continue;
        }
        const x0 = Math.min(mx - 1, Math.max(0, Math.floor(x)));
        const y0 = Math.min(my - 1, Math.max(0, Math.floor(y)));
        const z0 = Math.min(mz - 1, Math.max(0, Math.floor(z)));
        const x1 = Math.min(mx - 1, x0 + 1);
        const y1 = Math.min(my - 1, y0 + 1);
        const z1 = Math.min(mz - 1, z0 + 1);
        // Beyond the outer centres (by up to half a voxel) the edge value is held.
        const fx = Math.min(1, Math.max(0, x - x0));
        const fy = Math.min(1, Math.max(0, y - y0));
        const fz = Math.min(1, Math.max(0, z - z0));
        const at = (a: number, b: number, c: number) => logOmega[a + strideY * b + strideZ * c];
        const low =
          (1 - fy) * ((1 - fx) * at(x0, y0, z0) + fx * at(x1, y0, z0)) +
          fy * ((1 - fx) * at(x0, y1, z0) + fx * at(x1, y1, z0));
        const high =
          (1 - fy) * ((1 - fx) * at(x0, y0, z1) + fx * at(x1, y0, z1)) +
          fy * ((1 - fx) * at(x0, y1, z1) + fx * at(x1, y1, z1));
        if ((1 - fz) * low + fz * high >= logThreshold) mask[index] = 1;
      }
    }
  }
  return mask;
}

/** [min x, min y, min z, max x, max y, max z] of the voxels with Ω ≥ threshold; null if none. */
function damagedBox(
  omega: Float32Array | Float64Array,
  dimensions: readonly number[],
  threshold: number,
): number[] | null {
  const [mx, my, mz] = dimensions;
  const box = [Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity];
  let index = 0;
  for (let z = 0; z < mz; z++) {
    for (let y = 0; y < my; y++) {
      for (let x = 0; x < mx; x++, index++) {
        if (!(omega[index] >= threshold)) continue;
        box[0] = Math.min(box[0], x);
        box[1] = Math.min(box[1], y);
        box[2] = Math.min(box[2], z);
        box[3] = Math.max(box[3], x);
        box[4] = Math.max(box[4], y);
        box[5] = Math.max(box[5], z);
      }
    }
  }
  return box[0] === Infinity ? null : box;
}
