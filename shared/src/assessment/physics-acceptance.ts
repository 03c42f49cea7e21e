/**
 * Whether the physics zone may decide the verdict, and how far its surface may be off.
 *
 * The zone table is the maker's statement; the physics zone adds what the table cannot know
 * (vessels, several applicators together) but is a model. It replaces the table in the verdict
 * only when it has shown, on the tables of every profile the plan uses, that it predicts a row
 * it was not fitted to (leave-one-out, `bioheat/calibration.ts`) within the safety profile's
 * `physicsToleranceMm`, and only with a plausible calibration. Otherwise the table zone decides
 * and the physics zone is shown for information, with the reason in clinical words.
 *
 * The physics zone's boundary error combines, as independent errors (root sum of squares):
 * - the largest move of the zone's surface that the leave-one-out errors imply (an end moves by
 *   |Δcentre| + |Δlength|/2, a side by |Δwidth|/2), over the plan's profiles;
 * - reading the damage field from the 2 mm model grid onto the crop
 *   (`DAMAGE_INTERPOLATION_ERROR_MM`);
 * - the model grid's lie against the shaft: the calibration runs with the shaft along a grid
 *   axis, a plan's shaft lies at any angle, and zones then differ by under a sixth of a voxel
 *   in length and width (simulate-zone.spec.ts), a twelfth of a voxel at the surface.
 * It leaves out what no table can show (the liver's own perfusion, vessels' real flow): the
 * clinical caution covers those.
 */
import type { ProfileCalibration } from '../api/assessments';
import type { SafetyProfileBody } from '../api/safety-profiles';
import {
  CALIBRATION_MODEL_VERSION,
  CALIBRATION_SPACING_MM,
  DAMAGE_INTERPOLATION_ERROR_MM,
  type ApplicatorCalibration,
} from '../bioheat';

/** Tolerance used when a safety profile stored before the field existed carries none, mm. */
export const DEFAULT_PHYSICS_TOLERANCE_MM = 2;

/** Surface error from the model grid's orientation against the shaft, millimetres. */
export const GRID_ORIENTATION_ERROR_MM = CALIBRATION_SPACING_MM / 12;

/** One profile's calibration judged against the tolerance. */
export interface ProfileAcceptance {
  isWithinTolerance: boolean;
  /** Why the physics zone is for information only with this profile; absent when accepted. */
  advisoryReason?: string;
  /** How far the physics zone's surface may lie from the model's, millimetres. */
  boundaryErrorMm: number;
}

/** The physics zone of a plan judged as a whole. */
export interface PhysicsZoneAcceptance {
  isAccepted: boolean;
  advisoryReason?: string;
  boundaryErrorMm: number;
}

/** The safety profile's tolerance on the leave-one-out error, millimetres. */
export function physicsToleranceMm(profile: Pick<SafetyProfileBody, 'physicsToleranceMm'>): number {
  return profile.physicsToleranceMm ?? DEFAULT_PHYSICS_TOLERANCE_MM;
}

/** Judges one profile's calibration against the tolerance (mm). */
export function judgeCalibration(
  calibration: Readonly<ApplicatorCalibration>,
  toleranceMm: number,
): ProfileAcceptance {
  const boundaryErrorMm = Math.hypot(
    calibration.leaveOneOutBoundaryMm ?? fittedBoundaryMm(calibration),
    DAMAGE_INTERPOLATION_ERROR_MM,
    GRID_ORIENTATION_ERROR_MM,
  );
  const informationOnly = '; shown for information only.';
  if (calibration.modelVersion !== CALIBRATION_MODEL_VERSION) {
    return {
      isWithinTolerance: false,
      advisoryReason:
        'The heating model was calibrated to this profile by an earlier version of the model' +
        informationOnly,
      boundaryErrorMm,
    };
  }
  if (calibration.isImplausible) {
    return {
      isWithinTolerance: false,
      advisoryReason:
        'The heating model matches this profile’s zone table only with implausible settings (' +
        `${lowerFirst(calibration.implausibleReason ?? 'a setting at the end of its range').replace(/\.$/, '')})` +
        informationOnly,
      boundaryErrorMm,
    };
  }
  const looMm = calibration.leaveOneOutMaxMm;
  if (looMm === null) {
    return {
      isWithinTolerance: false,
      advisoryReason:
        `This profile’s zone table has ${calibration.rows.length} row(s), too few to test the ` +
        'heating model on rows it was not fitted to' +
        informationOnly,
      boundaryErrorMm,
    };
  }
  if (!(looMm <= toleranceMm)) {
    return {
      isWithinTolerance: false,
      advisoryReason:
        `The heating model predicts this profile’s own zone table to within ${roundedUp(looMm)} ` +
        `mm (leave-one-out), beyond the ${toleranceMm} mm tolerance` +
        informationOnly,
      boundaryErrorMm,
    };
  }
  return { isWithinTolerance: true, boundaryErrorMm };
}

/**
 * Judges the physics zone of a plan from the calibrations of its applicators (in plan order):
 * accepted only when every one is; the boundary error is the largest of theirs. A reason that
 * differs between applicators names them.
 */
export function judgePhysicsZone(
  calibrations: readonly Readonly<ApplicatorCalibration>[],
  toleranceMm: number,
): PhysicsZoneAcceptance {
  const judged = calibrations.map((calibration) => judgeCalibration(calibration, toleranceMm));
  const boundaryErrorMm = Math.max(0, ...judged.map((entry) => entry.boundaryErrorMm));
  const reasons = new Map<string, number[]>();
  judged.forEach((entry, index) => {
    if (entry.advisoryReason === undefined) return;
    reasons.set(entry.advisoryReason, [...(reasons.get(entry.advisoryReason) ?? []), index + 1]);
  });
  if (reasons.size === 0) return { isAccepted: true, boundaryErrorMm };
  const isShared = reasons.size === 1 && [...reasons.values()][0].length === judged.length;
  const advisoryReason = isShared
    ? [...reasons.keys()][0]
    : [...reasons]
        .map(([reason, numbers]) => `${applicatorNames(numbers)}: ${lowerFirst(reason)}`)
        .join(' ');
  return { isAccepted: false, advisoryReason, boundaryErrorMm };
}

/** The per-profile summary an assessment result carries (the server adds version and name). */
export function profileCalibrationSummary(
  profileId: string,
  calibration: Readonly<ApplicatorCalibration>,
  toleranceMm: number,
): ProfileCalibration {
  const judged = judgeCalibration(calibration, toleranceMm);
  return {
    profileId,
    parameter: calibration.parameters.couplingEfficiency,
    parameters: { ...calibration.parameters },
    rmsResidualMm: calibration.rmsResidualMm,
    maxResidualMm: calibration.maxResidualMm,
    leaveOneOutRmsMm: calibration.leaveOneOutRmsMm,
    leaveOneOutMaxMm: calibration.leaveOneOutMaxMm,
    isAtRangeLimit: calibration.isAtRangeLimit,
    isImplausible: calibration.isImplausible,
    ...(calibration.implausibleReason === undefined
      ? {}
      : { implausibleReason: calibration.implausibleReason }),
    toleranceMm,
    isWithinTolerance: judged.isWithinTolerance,
    ...(judged.advisoryReason === undefined ? {} : { advisoryReason: judged.advisoryReason }),
    rows: calibration.rows.map((row) => ({
      powerW: row.powerW,
      timeS: row.timeS,
      residualLengthMm: row.residualLengthMm,
      residualWidthMm: row.residualWidthMm,
      residualTipOffsetMm: row.residualTipOffsetMm,
    })),
  };
}

/**
 * Without a leave-one-out figure (too few rows), the surface move the fit's own residuals
 * imply: an underestimate, used only for a zone that is advisory anyway.
 */
function fittedBoundaryMm(calibration: Readonly<ApplicatorCalibration>): number {
  return Math.max(
    0,
    ...calibration.rows.map((row) =>
      Math.max(
        Math.abs(row.residualTipOffsetMm) + Math.abs(row.residualLengthMm) / 2,
        Math.abs(row.residualWidthMm) / 2,
      ),
    ),
  );
}

/** One decimal, rounded up: a bound shown rounded down could read as within the tolerance. */
function roundedUp(valueMm: number): string {
  return (Math.ceil(valueMm * 10 - 1e-9) / 10).toFixed(1);
}

function applicatorNames(numbers: readonly number[]): string {
  if (numbers.length === 1) return `Applicator ${numbers[0]}`;
  return `Applicators ${numbers.slice(0, -1).join(', ')} and ${numbers[numbers.length - 1]}`;
}

function lowerFirst(text: string): string {
  return `${text.charAt(0).toLowerCase()}${text.slice(1)}`;
}
