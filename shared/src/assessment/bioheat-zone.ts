/**
 * The one place the assessment calls the physics zone model (shared/src/bioheat): the Pennes
 * bioheat equation with Arrhenius damage on a sub-box of the assessment's crop, large vessels
 * held at blood temperature. The grid is the series' own (same spacing and axes), so the
 * heat-sink mask and the damage mask need no resampling; a model answering on another grid is
 * still read back onto the crop, by nearest voxel.
 */
import { simulateAblationZone, type AblationZoneInput, type AblationZoneResult } from '../bioheat';
import {
  lpsToVoxel,
  voxelCount,
  voxelToLps,
  type VolumeGeometry,
} from '../geometry/patient-geometry';
import { subtract, type Vec3 } from '../geometry/vector';

/** The physics model's signature: `simulateAblationZone`, or a stand-in (e.g. in a worker). */
export type BioheatZoneModel = (
  input: Readonly<AblationZoneInput>,
) => AblationZoneResult | Promise<AblationZoneResult>;

/** The model the engine uses unless told otherwise. */
export const defaultBioheatZoneModel: BioheatZoneModel = (input) => simulateAblationZone(input);

/**
 * Room around the heating segments for the simulated zone and its body-temperature walls, mm:
 * the physics module's own working figure (zones rarely exceed 50 mm across, walls ~3
 * perfusion lengths beyond; bioheat/zone-crop.ts).
 */
export const BIOHEAT_GRID_MARGIN_MM = 30;

/**
 * The model's damage mask (Ω ≥ 1) on the crop grid, by nearest voxel of the model's grid; and
 * whether the damage reaches the outer layer of the model's grid, so that the zone may be cut.
 */
export function damageOnCrop(
  result: Pick<AblationZoneResult, 'damageMask' | 'geometry'>,
  cropGeometry: VolumeGeometry,
): { mask: Uint8Array; isCut: boolean } {
  const model = result.geometry;
  if (result.damageMask.length !== voxelCount(model.dimensions)) {
    throw new RangeError('the bioheat damage mask does not match its grid');
  }
  const [mx, my, mz] = model.dimensions;
  const [cx, cy, cz] = cropGeometry.dimensions;
  // The crop-to-model map is affine: its origin and one column per crop axis.
  const origin = lpsToVoxel(model, voxelToLps(cropGeometry, [0, 0, 0]));
  const columns = (
    [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ] as Vec3[]
  ).map((unit) => subtract(lpsToVoxel(model, voxelToLps(cropGeometry, unit)), origin));
  const mask = new Uint8Array(cx * cy * cz);
  let index = 0;
  for (let k = 0; k < cz; k++) {
    for (let j = 0; j < cy; j++) {
      for (let i = 0; i < cx; i++, index++) {
        const x = Math.round(origin[0] + columns[0][0] * i + columns[1][0] * j + columns[2][0] * k);
        const y = Math.round(origin[1] + columns[0][1] * i + columns[1][1] * j + columns[2][1] * k);
        const z = Math.round(origin[2] + columns[0][2] * i + columns[1][2] * j + columns[2][2] * k);
        if (x < 0 || y < 0 || z < 0 || x >= mx || y >= my || z >= mz) continue;
        mask[index] = result.damageMask[x + mx * (y + my * z)] !== 0 ? 1 : 0;
      }
    }
  }
  let isCut = false;
  index = 0;
  for (let z = 0; z < mz && !isCut; z++) {
    for (let y = 0; y < my && !isCut; y++) {
      for (let x = 0; x < mx; x++, index++) {
        const isOuter =
          x === 0 || y === 0 || z === 0 || x === mx - 1 || y === my - 1 || z === mz - 1;
        if (isOuter && result.damageMask[index] !== 0) {
          isCut = true;
          break;
        }
      }
    }
  }
  return { mask, isCut };
}
