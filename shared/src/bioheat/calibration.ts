/**
 * Calibration of the zone model to an applicator profile's zone table: the one free parameter
 * of the heating model (the coupling efficiency η, `applicator-heating.ts`) chosen so that the
 * simulated zones in homogeneous liver best match the table's, by least squares on length and
 * width over all rows.
 *
 * Zone sizes grow smoothly and monotonically with η and almost linearly with ln η, so the
 * search runs on x = ln η by Gauss–Newton with a secant derivative (the last two evaluations),
 * halving a step that fails to lower the sum of squares; it ends when a step moves η by less
 * than 0.2 %. Each evaluation simulates every power of the table once (`homogeneous-zone.ts`).
 */
import type { ZoneTableRow } from '../api/applicator-profiles';
import { clinicalCaution } from '../api/caution';
import { homogeneousZoneSizes, type HomogeneousZoneOptions } from './homogeneous-zone';
import type { ShaftZoneSize } from './zone-measurement';

/** What the calibration reads of a profile. */
export interface CalibrationProfile {
  /** Length of the heating segment that ends at the tip, millimetres. */
  activeLengthMm: number;
  zoneTable: readonly ZoneTableRow[];
}

export interface CalibrationOptions extends HomogeneousZoneOptions {
  /** Lowest and highest η tried (default 0.01 and 4). */
  parameterRange?: readonly [number, number];
  /** First η tried (default 0.3). */
  startParameter?: number;
  /** Called after every evaluation with an estimate of the fraction done, 0–1. */
  onProgress?: (fraction: number) => void;
}

/** One table row against the model at the calibrated parameter; millimetres. */
export interface CalibrationRow {
  powerW: number;
  timeS: number;
  tableLengthMm: number;
  tableWidthMm: number;
  modelLengthMm: number;
  modelWidthMm: number;
  /** Model − table. */
  residualLengthMm: number;
  residualWidthMm: number;
  /** Centre of the zone behind the tip: the table's, and the model's (not fitted). */
  tableTipOffsetMm: number;
  modelTipOffsetMm: number | null;
}

export interface ApplicatorCalibration {
  /** The coupling efficiency η (no unit): the `calibration` of a `ZoneApplicator`. */
  parameter: number;
  rows: CalibrationRow[];
  /** Root mean square of all length and width residuals, millimetres. */
  rmsResidualMm: number;
  /** Model evaluations used (each simulates every power of the table once). */
  evaluations: number;
  /** Whether η ended at an end of `parameterRange` (the table is out of the model's reach). */
  isAtRangeLimit: boolean;
  caution: string;
}

const STEP_TOLERANCE = 0.002;
const MAX_EVALUATIONS = 30;
/** Largest step in ln η (a factor of 4), so that one poor secant cannot throw the search far. */
const MAX_LOG_STEP = Math.log(4);
/** Evaluations a typical calibration needs, for the progress estimate. */
const TYPICAL_EVALUATIONS = 7;

interface Evaluation {
  logParameter: number;
  residuals: number[];
  sumOfSquares: number;
  sizes: ShaftZoneSize[];
}

/**
 * Finds the coupling efficiency η for which the model's zones in homogeneous liver best match
 * the profile's zone table (least squares on length and width, millimetres, all rows weighted
 * alike), and reports every row's residual. Throws a RangeError for a malformed profile or
 * options, and a `BioheatAbortedError` when `shouldAbort` answers true.
 */
export function calibrateApplicatorProfile(
  profile: Readonly<CalibrationProfile>,
  options: Readonly<CalibrationOptions> = {},
): ApplicatorCalibration {
  checkProfile(profile);
  const [lowest, highest] = options.parameterRange ?? [0.01, 4];
  if (!(lowest > 0 && highest > lowest && Number.isFinite(highest))) {
    throw new RangeError('parameterRange must be two positive numbers, the lower first');
  }
  const start = options.startParameter ?? 0.3;
  if (!(start >= lowest && start <= highest)) {
    throw new RangeError('startParameter must lie within parameterRange');
  }
  const lowX = Math.log(lowest);
  const highX = Math.log(highest);
  const clampX = (x: number) => Math.min(highX, Math.max(lowX, x));
  const table = profile.zoneTable;
  const rows = table.map((row) => ({
    powerW: row.powerW,
    timeS: row.timeS,
    expectedLengthMm: row.zoneLengthMm,
    expectedWidthMm: row.zoneWidthMm,
    expectedTipOffsetMm: row.tipOffsetMm,
  }));

  const evaluations: Evaluation[] = [];
  const evaluate = (logParameter: number): Evaluation => {
    const sizes = homogeneousZoneSizes(
      profile.activeLengthMm,
      rows,
      Math.exp(logParameter),
      options,
    );
    const residuals = sizes.flatMap((size, index) => [
      size.lengthMm - table[index].zoneLengthMm,
      size.widthMm - table[index].zoneWidthMm,
    ]);
    const evaluation = {
      logParameter,
      residuals,
      sumOfSquares: residuals.reduce((sum, residual) => sum + residual * residual, 0),
      sizes,
    };
    evaluations.push(evaluation);
    options.onProgress?.(Math.min(0.95, evaluations.length / TYPICAL_EVALUATIONS));
    return evaluation;
  };

  let previous = evaluate(clampX(Math.log(start)));
  let current = evaluate(clampX(previous.logParameter + Math.LN2));
  let best = current.sumOfSquares < previous.sumOfSquares ? current : previous;
  while (evaluations.length < MAX_EVALUATIONS) {
    const proposed = clampX(best.logParameter + gaussNewtonStep(previous, current, best));
    if (Math.abs(proposed - best.logParameter) < STEP_TOLERANCE) break;
    let trial = evaluate(proposed);
    // A step that fails to lower the sum of squares is halved until it does, or is tiny.
    while (trial.sumOfSquares >= best.sumOfSquares && evaluations.length < MAX_EVALUATIONS) {
      const halfway = (best.logParameter + trial.logParameter) / 2;
      if (Math.abs(halfway - best.logParameter) < STEP_TOLERANCE) break;
      trial = evaluate(halfway);
    }
    previous = current;
    current = trial;
    if (trial.sumOfSquares < best.sumOfSquares) best = trial;
    else break;
  }
  options.onProgress?.(1);

  const parameter = Math.exp(best.logParameter);
  return {
    parameter,
    rows: table.map((row, index) => ({
      powerW: row.powerW,
      timeS: row.timeS,
      tableLengthMm: row.zoneLengthMm,
      tableWidthMm: row.zoneWidthMm,
      modelLengthMm: best.sizes[index].lengthMm,
      modelWidthMm: best.sizes[index].widthMm,
      residualLengthMm: best.residuals[2 * index],
      residualWidthMm: best.residuals[2 * index + 1],
      tableTipOffsetMm: row.tipOffsetMm,
      modelTipOffsetMm: best.sizes[index].tipOffsetMm,
    })),
    rmsResidualMm: Math.sqrt(best.sumOfSquares / best.residuals.length),
    evaluations: evaluations.length,
    isAtRangeLimit:
      Math.abs(best.logParameter - lowX) < STEP_TOLERANCE ||
      Math.abs(best.logParameter - highX) < STEP_TOLERANCE,
    caution: clinicalCaution,
  };
}

/**
 * The Gauss–Newton step in ln η from `best`, −(J·r)/(J·J), with the Jacobian J of the residuals
 * r estimated by the secant through the last two evaluations; at most `MAX_LOG_STEP` long.
 * Without any sensitivity (no zone at either η) the step goes up by the largest step.
 */
function gaussNewtonStep(previous: Evaluation, current: Evaluation, best: Evaluation): number {
  const spacing = current.logParameter - previous.logParameter;
  let gradient = 0;
  let curvature = 0;
  for (let index = 0; index < best.residuals.length; index++) {
    const slope =
      spacing === 0 ? 0 : (current.residuals[index] - previous.residuals[index]) / spacing;
    gradient += slope * best.residuals[index];
    curvature += slope * slope;
  }
  if (!(curvature > 1e-12)) return MAX_LOG_STEP;
  return Math.max(-MAX_LOG_STEP, Math.min(MAX_LOG_STEP, -gradient / curvature));
}

function checkProfile(profile: Readonly<CalibrationProfile>): void {
  if (!(profile.activeLengthMm > 0) || !Number.isFinite(profile.activeLengthMm)) {
    throw new RangeError(`activeLengthMm must be a positive number, got ${profile.activeLengthMm}`);
  }
  if (!Array.isArray(profile.zoneTable) || profile.zoneTable.length === 0) {
    throw new RangeError('zoneTable must hold at least one row');
  }
  profile.zoneTable.forEach((row, index) => {
    for (const name of ['powerW', 'timeS', 'zoneLengthMm', 'zoneWidthMm'] as const) {
      if (!(row[name] > 0) || !Number.isFinite(row[name])) {
        throw new RangeError(`zoneTable[${index}].${name} must be a positive number`);
      }
    }
    if (!Number.isFinite(row.tipOffsetMm)) {
      throw new RangeError(`zoneTable[${index}].tipOffsetMm must be a finite number`);
    }
  });
}
