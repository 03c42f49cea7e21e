/**
 * Calibration of the zone model to an applicator profile's zone table, and how well it holds.
 *
 * Four parameters of the heating (`heating-parameters.ts`) are fitted so that the model's zones
 * in homogeneous liver match the table's length, width and centre behind the tip, by least
 * squares over all rows (`calibration-fit.ts`): the coupling efficiency η, its power exponent γ
 * (when the table holds more than one power), the heating length and the segment's offset from
 * the tip. Every row's residual is reported.
 *
 * A fit to the same rows it is judged on flatters any model, so each row is also predicted by
 * the model refitted without it (leave-one-out): its error says how well the model predicts a
 * heating it was not told about, which is what a plan asks of it. The physics zone may decide a
 * verdict only when that error is within the safety profile's tolerance
 * (`assessment/physics-acceptance.ts`).
 *
 * The result is plain data: the server stores it per profile version and hands it back to the
 * workers. `CALIBRATION_MODEL_VERSION` names the model; a stored calibration of another version
 * is fitted again.
 */
import type { ZoneTableRow } from '../api/applicator-profiles';
import { clinicalCaution } from '../api/caution';
import { fitRows, type FitResult } from './calibration-fit';
import { CalibrationModel, SEGMENT_OFFSET, type ParameterVector } from './calibration-model';
import { implausibilityReasons, isAtRangeLimit } from './calibration-plausibility';
import type { HeatingParameters } from './heating-parameters';
import type { HomogeneousZoneOptions } from './homogeneous-zone';

/**
 * Names the zone model and its calibration (grid, solver, parameters, fit). Change it whenever
 * a change would give another calibration for the same table, so that stored ones are redone.
 */
export const CALIBRATION_MODEL_VERSION = 'bioheat-2: 2 mm Pennes, η γ length offset, LOO';

/** Fewest rows for a leave-one-out check: two left to refit four parameters to six sizes. */
export const MIN_ROWS_FOR_LEAVE_ONE_OUT = 3;

/** What the calibration reads of a profile. */
export interface CalibrationProfile {
  /** Length of the profile's radiating segment behind the tip, millimetres (the start value). */
  activeLengthMm: number;
  zoneTable: readonly ZoneTableRow[];
}

export interface CalibrationOptions extends HomogeneousZoneOptions {
  /** Called now and then with an estimate of the fraction done, 0–1. */
  onProgress?: (fraction: number) => void;
}

/** Model − table of one quantity of a row, millimetres. */
export interface RowErrors {
  lengthMm: number;
  widthMm: number;
  tipOffsetMm: number;
}

/** One table row against the calibrated model; millimetres. */
export interface CalibrationRow {
  powerW: number;
  timeS: number;
  tableLengthMm: number;
  tableWidthMm: number;
  /** Centre of the zone behind the tip. */
  tableTipOffsetMm: number;
  modelLengthMm: number;
  modelWidthMm: number;
  /** Null when the model gives no zone for the row. */
  modelTipOffsetMm: number | null;
  /** Model − table. */
  residualLengthMm: number;
  residualWidthMm: number;
  residualTipOffsetMm: number;
  /** Prediction of the model fitted without this row, minus the table; null with too few rows. */
  leaveOneOut: RowErrors | null;
}

export interface ApplicatorCalibration {
  /** `CALIBRATION_MODEL_VERSION` of the model that made it. */
  modelVersion: string;
  parameters: HeatingParameters;
  rows: CalibrationRow[];
  /** Root mean square of all length, width and centre residuals, millimetres. */
  rmsResidualMm: number;
  /** Largest of them in size, millimetres. */
  maxResidualMm: number;
  /** Root mean square and largest of the leave-one-out errors, millimetres; null: too few rows. */
  leaveOneOutRmsMm: number | null;
  leaveOneOutMaxMm: number | null;
  /**
   * Largest move of the zone's surface the leave-one-out errors imply, millimetres: an end of
   * the zone moves by |Δcentre| + |Δlength|/2, a side by |Δwidth|/2; the worst row's worse.
   */
  leaveOneOutBoundaryMm: number | null;
  /** Whether a fitted parameter ended at an end of its range. */
  isAtRangeLimit: boolean;
  isImplausible: boolean;
  /** Why, in words, when implausible. */
  implausibleReason?: string;
  /** Runs of one power of the table in homogeneous liver that the fits needed. */
  simulations: number;
  caution: string;
}

const FULL_FIT = { toleranceMm: 0.01, maxIterations: 25, refreshOnAccept: true };
const LEAVE_ONE_OUT_FIT = { toleranceMm: 0.02, maxIterations: 8, refreshOnAccept: false };
/** The coupling efficiency the full fit starts from. */
const START_EFFICIENCY = 0.3;

/**
 * Fits the heating parameters to the profile's zone table (lengths, widths and centres in
 * millimetres, all rows alike), reports every row's residual and leave-one-out error and
 * whether the result is plausible. Throws a RangeError for a malformed profile and a
 * `BioheatAbortedError` when `shouldAbort` answers true.
 */
export function calibrateApplicatorProfile(
  profile: Readonly<CalibrationProfile>,
  options: Readonly<CalibrationOptions> = {},
): ApplicatorCalibration {
  checkProfile(profile);
  const table = profile.zoneTable;
  const model = new CalibrationModel(table, profile.activeLengthMm, options);
  const all = table.map((_, index) => index);
  const start: ParameterVector = [Math.log(START_EFFICIENCY), 0, profile.activeLengthMm, 0];
  const full = fitRows(model, start, all, FULL_FIT);
  options.onProgress?.(0.4);

  const leaveOneOut =
    table.length >= MIN_ROWS_FOR_LEAVE_ONE_OUT
      ? all.map((index) => {
          const errors = leaveOneOutErrors(model, full, all, index);
          options.onProgress?.(0.4 + (0.6 * (index + 1)) / table.length);
          return errors;
        })
      : null;
  options.onProgress?.(1);

  const residuals = all.map((index) =>
    model.rowResiduals(index, full.sizes, full.x[SEGMENT_OFFSET]),
  );
  const reasons = implausibilityReasons(model, full.x, full.sizes, table);
  const looValues = leaveOneOut?.flatMap((row) => [row.lengthMm, row.widthMm, row.tipOffsetMm]);
  return {
    modelVersion: CALIBRATION_MODEL_VERSION,
    parameters: model.heatingOf(full.x),
    rows: table.map((row, index) => ({
      powerW: row.powerW,
      timeS: row.timeS,
      tableLengthMm: row.zoneLengthMm,
      tableWidthMm: row.zoneWidthMm,
      tableTipOffsetMm: row.tipOffsetMm,
      modelLengthMm: full.sizes[index].lengthMm,
      modelWidthMm: full.sizes[index].widthMm,
      modelTipOffsetMm: full.sizes[index].hasZone
        ? full.sizes[index].centreMm + full.x[SEGMENT_OFFSET]
        : null,
      residualLengthMm: residuals[index][0],
      residualWidthMm: residuals[index][1],
      residualTipOffsetMm: residuals[index][2],
      leaveOneOut: leaveOneOut?.[index] ?? null,
    })),
    rmsResidualMm: rootMeanSquare(residuals.flat()),
    maxResidualMm: largestMagnitude(residuals.flat()),
    leaveOneOutRmsMm: looValues ? rootMeanSquare(looValues) : null,
    leaveOneOutMaxMm: looValues ? largestMagnitude(looValues) : null,
    leaveOneOutBoundaryMm: leaveOneOut
      ? Math.max(
          ...leaveOneOut.map((row) =>
            Math.max(
              Math.abs(row.tipOffsetMm) + Math.abs(row.lengthMm) / 2,
              Math.abs(row.widthMm) / 2,
            ),
          ),
        )
      : null,
    isAtRangeLimit: isAtRangeLimit(model, full.x),
    isImplausible: reasons.length > 0,
    ...(reasons.length > 0 ? { implausibleReason: sentence(reasons) } : {}),
    simulations: model.simulations,
    caution: clinicalCaution,
  };
}

/** Row `index` predicted by the model refitted, from the full fit, to the other rows. */
function leaveOneOutErrors(
  model: CalibrationModel,
  full: FitResult,
  all: readonly number[],
  index: number,
): RowErrors {
  const others = all.filter((other) => other !== index);
  const refit = fitRows(model, full.x, others, LEAVE_ONE_OUT_FIT, full.rowJacobians);
  const [lengthMm, widthMm, tipOffsetMm] = model.rowResiduals(
    index,
    refit.sizes,
    refit.x[SEGMENT_OFFSET],
  );
  return { lengthMm, widthMm, tipOffsetMm };
}

function rootMeanSquare(values: readonly number[]): number {
  return Math.sqrt(values.reduce((sum, value) => sum + value * value, 0) / values.length);
}

function largestMagnitude(values: readonly number[]): number {
  return values.reduce((largest, value) => Math.max(largest, Math.abs(value)), 0);
}

function sentence(reasons: readonly string[]): string {
  const text = reasons.join('; ');
  return `${text.charAt(0).toUpperCase()}${text.slice(1)}.`;
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
