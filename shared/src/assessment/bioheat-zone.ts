/**
 * The one place the assessment calls the physics zone model (shared/src/bioheat): the Pennes
 * bioheat equation with Arrhenius damage on a sub-box of the assessment's crop, large vessels
 * held at blood temperature. The model runs on a grid of the series' axes at the calibration
 * spacing (`CALIBRATION_SPACING_MM`, 2 mm isotropic): the heating was calibrated on that grid,
 * and at a series' own thin spacing the explicit solve costs ~40× more (the stable step shrinks
 * with the spacing squared). The heat-sink mask goes onto it by nearest voxel; the damage Ω
 * comes back onto the crop by trilinear interpolation of ln Ω, thresholded at Ω = 1
 * (`resampleDamageMask`), so the zone's edge is not moved by half a model voxel.
 *
 * A vessel held at blood temperature is the strongest heat sink the model allows (as if its
 * flow were unlimited): real vessels cool less, so beside a vessel the physics zone is the
 * model's smallest.
 */
import {
  CALIBRATION_SPACING_MM,
  resampleDamageMask,
  simulateAblationZone,
  zoneApplicatorOf,
  type AblationZoneInput,
  type AblationZoneResult,
  type HeatingParameters,
} from '../bioheat';
import {
  lpsToVoxel,
  voxelCount,
  voxelToLps,
  type VolumeGeometry,
} from '../geometry/patient-geometry';
import { subtract, type Vec3 } from '../geometry/vector';
import { boxGeometry, type VoxelBox } from '../geometry/voxel-box';
import type { AssessmentInput } from './assessment-input';

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
 * The model's damage zone (Ω ≥ 1) on the crop grid, Ω interpolated from the model's grid; and
 * whether the damage reaches the outer layer of the model's grid, so that the zone may be cut.
 */
export function damageOnCrop(
  result: Pick<AblationZoneResult, 'damageMask' | 'omega' | 'geometry'>,
  cropGeometry: VolumeGeometry,
): { mask: Uint8Array; isCut: boolean } {
  const model = result.geometry;
  if (
    result.damageMask.length !== voxelCount(model.dimensions) ||
    result.omega.length !== voxelCount(model.dimensions)
  ) {
    throw new RangeError('the bioheat damage fields do not match their grid');
  }
  const [mx, my, mz] = model.dimensions;
  const mask = resampleDamageMask(result.omega, model, cropGeometry);
  let isCut = false;
  let index = 0;
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

/**
 * A mask on `target`: at each voxel centre the value (0 or 1) of the nearest voxel of the
 * mask on `source`, 0 outside `source`. Both grids LPS, millimetres, any spacing and axes.
 */
export function sampleNearest(
  sourceMask: Uint8Array,
  source: VolumeGeometry,
  target: VolumeGeometry,
): Uint8Array {
  const [mx, my, mz] = source.dimensions;
  const [cx, cy, cz] = target.dimensions;
  // The crop-to-model map is affine: its origin and one column per crop axis.
  const origin = lpsToVoxel(source, voxelToLps(target, [0, 0, 0]));
  const columns = (
    [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ] as Vec3[]
  ).map((unit) => subtract(lpsToVoxel(source, voxelToLps(target, unit)), origin));
  const mask = new Uint8Array(cx * cy * cz);
  let index = 0;
  for (let k = 0; k < cz; k++) {
    for (let j = 0; j < cy; j++) {
      for (let i = 0; i < cx; i++, index++) {
        const x = Math.round(origin[0] + columns[0][0] * i + columns[1][0] * j + columns[2][0] * k);
        const y = Math.round(origin[1] + columns[0][1] * i + columns[1][1] * j + columns[2][1] * k);
        const z = Math.round(origin[2] + columns[0][2] * i + columns[1][2] * j + columns[2][2] * k);
        if (x < 0 || y < 0 || z < 0 || x >= mx || y >= my || z >= mz) continue;
        mask[index] = sourceMask[x + mx * (y + my * z)] !== 0 ? 1 : 0;
      }
    }
  }
  return mask;
}

/** How one run of the physics model is made. */
export interface BioheatRunOptions {
  model?: BioheatZoneModel;
  onProgress?: (fraction: number) => void;
  shouldAbort?: () => boolean;
  timeLimitMs?: number;
}

/**
 * The physics zone on the crop (`box` in its voxel indices is the model's grid), vessels of the
 * heat-sink kinds at least the heat-sink diameter wide held at blood temperature, read back
 * onto the crop; each applicator heated as its profile's calibration says (`heatings`, in plan
 * order).
 */
export async function runBioheatZone(
  input: AssessmentInput,
  cropGeometry: VolumeGeometry,
  box: VoxelBox,
  vessels: readonly { diametersMm: Float32Array }[],
  heatings: readonly HeatingParameters[],
  options: BioheatRunOptions,
): Promise<{ mask: Uint8Array; isCut: boolean }> {
  const model = options.model ?? defaultBioheatZoneModel;
  const boxGrid = boxGeometry(cropGeometry, box);
  const modelGrid = calibrationGridOver(boxGrid);
  const result = await model({
    geometry: modelGrid,
    heatSinkMask: sampleNearest(
      wideVesselMask(cropGeometry, box, vessels, input.safetyProfile.heatSinkDiameterMm),
      boxGrid,
      modelGrid,
    ),
    applicators: input.applicators.map((applicator, index) =>
      zoneApplicatorOf(heatings[index], {
        entryLps: applicator.entry,
        tipLps: applicator.target,
        powerW: applicator.powerW,
        timeS: applicator.timeS,
      }),
    ),
    onProgress: options.onProgress,
    shouldAbort: options.shouldAbort,
    timeLimitMs: options.timeLimitMs,
  });
  return damageOnCrop(result, cropGeometry);
}

/**
 * A grid of the same axes and extent as `grid` (it covers at least the same box), at the
 * calibration spacing in every direction.
 */
export function calibrationGridOver(grid: VolumeGeometry): VolumeGeometry {
  const spacing = CALIBRATION_SPACING_MM;
  const dimensions = grid.dimensions.map((extent, axis) =>
    Math.max(1, Math.ceil(((extent - 1) * grid.spacingMm[axis]) / spacing) + 1),
  ) as VolumeGeometry['dimensions'];
  return {
    dimensions,
    spacingMm: [spacing, spacing, spacing],
    originLps: grid.originLps,
    direction: grid.direction,
  };
}

/** Voxels of the box (crop indices) where a heat-sink vessel is at least `diameterMm` wide. */
function wideVesselMask(
  cropGeometry: VolumeGeometry,
  box: VoxelBox,
  vessels: readonly { diametersMm: Float32Array }[],
  diameterMm: number,
): Uint8Array {
  const [nx, ny] = cropGeometry.dimensions;
  const [bx, by, bz] = box.size;
  const mask = new Uint8Array(bx * by * bz);
  for (let z = 0; z < bz; z++) {
    for (let y = 0; y < by; y++) {
      for (let x = 0; x < bx; x++) {
        const crop = box.start[0] + x + nx * (box.start[1] + y + ny * (box.start[2] + z));
        if (vessels.some((vessel) => vessel.diametersMm[crop] >= diameterMm)) {
          mask[x + bx * (y + by * z)] = 1;
        }
      }
    }
  }
  return mask;
}
