/**
 * The physics ablation zone of a plan: the applicators' heat in liver by the
 * Pennes bioheat equation on a crop grid, large vessels as heat sinks, and the zone where the
 * Arrhenius damage integral reaches 1.
 *
 * A model, not a measurement: linear tissue properties, no water vapour or charring, and one
 * calibrated coupling efficiency per applicator profile. It shows what the physics suggests;
 * the treating team, local protocols and licensed practice decide (`clinicalCaution`).
 */
import { clinicalCaution } from '../api/caution';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { applicatorHeatingPhases, type ZoneApplicator } from './applicator-heating';
import type { WallCondition } from './bioheat-grid';
import {
  solvePennesTransient,
  type ArrheniusReference,
  type PerfusionModel,
} from './pennes-solver';
import { DAMAGE_THRESHOLD_OMEGA } from './thermal-damage';
import { LIVER_ARRHENIUS, LIVER_TISSUE } from './tissue-properties';

/**
 * The settings every zone simulation and every calibration shares, so that a calibrated
 * coupling efficiency means the same in both: liver, perfusion stopping with damage, Ω counted
 * above the arterial rate, the crop grid inside a body at 37 °C.
 */
export const ZONE_MODEL = Object.freeze({
  tissue: LIVER_TISSUE,
  arrhenius: LIVER_ARRHENIUS,
  perfusionModel: 'stops-with-damage' as PerfusionModel,
  arrheniusReference: 'above-arterial' as ArrheniusReference,
  walls: 'body-temperature' as WallCondition,
});

/** What a zone simulation needs. */
export interface AblationZoneInput {
  /**
   * The crop grid, built by the caller (e.g. 1.5–2 mm isotropic, or the series' own spacing),
   * axis-aligned with the series; its direction cosines must be orthonormal. It must hold the
   * applicators' heating segments with room for the zone (see `zoneCropGeometry`). The cost
   * grows as voxels × steps, and the stable step shrinks with the spacing squared: a 60 mm cube
   * takes ~0.15 s at 2 mm and ~0.6 s at 1.5 mm, but ~7 s at a series' 0.7 × 0.7 × 2.5 mm.
   * Calibration runs at 2 mm (`CALIBRATION_SPACING_MM`); zones at 1.5 mm agree within ~0.3 mm.
   */
  geometry: VolumeGeometry;
  /** Large vessels on the crop grid (non-zero = vessel), held at blood temperature. */
  heatSinkMask?: Uint8Array;
  /** Applicators heating together from time 0; their sources add. */
  applicators: readonly ZoneApplicator[];
  /** Fraction done, 0–1. */
  onProgress?: (fraction: number) => void;
  /** Answering true stops the run with a `BioheatAbortedError`. */
  shouldAbort?: () => boolean;
  /** Wall-clock limit, milliseconds (`BioheatAbortedError` past it). */
  timeLimitMs?: number;
}

/** A simulated zone on the crop grid; every array has one value per voxel of `geometry`. */
export interface AblationZoneResult {
  /** The crop grid the fields live on. */
  geometry: VolumeGeometry;
  /** 1 where Ω ≥ 1 (coagulated), else 0. */
  damageMask: Uint8Array;
  /** Arrhenius damage integral Ω at the end of the heating, no unit. */
  omega: Float32Array;
  /** CEM43 thermal dose, equivalent minutes at 43 °C. */
  cem43: Float32Array;
  /** Highest temperature reached, °C (the linear model overstates it near the applicator). */
  peakTemperatureC: Float32Array;
  /** Volume of the damage mask, millilitres. */
  volumeMl: number;
  /** Time steps taken, and the largest of them in seconds. */
  stepCount: number;
  timeStepS: number;
  /** Decision-support caution to show beside the zone. */
  caution: string;
}

/**
 * Simulates the ablation zone of one plan: all applicators heat from time 0, each for its own
 * `timeS`, and the run ends when the last one stops. Positions LPS, millimetres.
 *
 * Throws a RangeError naming the field for malformed input (a heat-sink mask of the wrong size,
 * an applicator outside the grid …) and a `BioheatAbortedError` when cancelled or out of time.
 */
export function simulateAblationZone(input: Readonly<AblationZoneInput>): AblationZoneResult {
  const { geometry } = input;
  const phases = applicatorHeatingPhases(geometry, input.applicators);
  const voxels = geometry.dimensions[0] * geometry.dimensions[1] * geometry.dimensions[2];
  if (input.heatSinkMask !== undefined) {
    if (!(input.heatSinkMask instanceof Uint8Array)) {
      throw new RangeError('heatSinkMask must be a Uint8Array');
    }
    if (input.heatSinkMask.length !== voxels) {
      throw new RangeError(
        `heatSinkMask has ${input.heatSinkMask.length} voxels, the crop grid ${voxels}`,
      );
    }
  }
  const result = solvePennesTransient({
    grid: { dimensions: geometry.dimensions, spacingMm: geometry.spacingMm },
    tissue: ZONE_MODEL.tissue,
    arrhenius: ZONE_MODEL.arrhenius,
    walls: ZONE_MODEL.walls,
    perfusionModel: ZONE_MODEL.perfusionModel,
    arrheniusReference: ZONE_MODEL.arrheniusReference,
    clampedMask: input.heatSinkMask,
    phases,
    onProgress: input.onProgress,
    shouldAbort: input.shouldAbort,
    timeLimitMs: input.timeLimitMs,
  });
  const damageMask = new Uint8Array(result.omega.length);
  let damagedVoxels = 0;
  for (let index = 0; index < damageMask.length; index++) {
    if (result.omega[index] >= DAMAGE_THRESHOLD_OMEGA) {
      damageMask[index] = 1;
      damagedVoxels++;
    }
  }
  const [spacingI, spacingJ, spacingK] = geometry.spacingMm;
  return {
    geometry,
    damageMask,
    omega: Float32Array.from(result.omega),
    cem43: Float32Array.from(result.cem43Minutes),
    peakTemperatureC: Float32Array.from(result.peakTemperatureC),
    volumeMl: (damagedVoxels * spacingI * spacingJ * spacingK) / 1000,
    stepCount: result.stepCount,
    timeStepS: result.timeStepS,
    caution: clinicalCaution,
  };
}
