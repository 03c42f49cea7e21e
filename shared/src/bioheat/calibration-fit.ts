/**
 * Least-squares fits of the calibration model (`calibration-model.ts`) to a set of zone table
 * rows: Levenberg–Marquardt on (ln η, γ, heating length, segment offset) within their bounds,
 * the offset set to its exact optimum after every run (it enters the residuals linearly).
 *
 * The full fit refreshes the Jacobian after every accepted step. A leave-one-out refit starts
 * from the full fit and reuses its Jacobian (the chord method: dropping one row moves the
 * optimum only a little), refreshing it only when a step fails to lower the sum of squares; it
 * usually needs one or two runs of each power, most of them new points of the cache.
 */
import {
  SEGMENT_OFFSET,
  type CalibrationModel,
  type ParameterVector,
  type RowSizes,
} from './calibration-model';
import { dampedGaussNewtonStep } from './least-squares-step';

export interface FitResult {
  x: ParameterVector;
  sizes: RowSizes[];
  sumOfSquares: number;
  /** ∂(length, width, centre)/∂x of every row (not only the fitted ones) at or near x. */
  rowJacobians: number[][][];
}

export interface FitSettings {
  /** Stop once the next step would move no fitted size by more than this, millimetres. */
  toleranceMm: number;
  maxIterations: number;
  /** Whether the Jacobian is recomputed after every accepted step (else only on failure). */
  refreshOnAccept: boolean;
}

const INITIAL_DAMPING = 1e-3;
const MAX_DAMPING = 1e6;
/** Failed steps in a row, with a fresh Jacobian, after which a fit stops. */
const MAX_FAILURES = 2;

/** Fits the rows `included` from `start`, optionally with the Jacobian known at `start`. */
export function fitRows(
  model: CalibrationModel,
  start: Readonly<ParameterVector>,
  included: readonly number[],
  settings: Readonly<FitSettings>,
  knownJacobians?: number[][][],
): FitResult {
  let x = model.clamp(start);
  let sizes = model.sizesAt(x);
  x[SEGMENT_OFFSET] = model.bestOffset(sizes, included);
  let sumOfSquares = sumOfSquaresOf(model.residuals(x, sizes, included));
  let rowJacobians = knownJacobians ?? model.rowJacobians(x, sizes);
  // A Jacobian handed in was computed at `start` (the full fit's optimum): fresh until a step.
  let isFresh = true;
  let damping = INITIAL_DAMPING;
  let failures = 0;
  for (let iteration = 0; iteration < settings.maxIterations; iteration++) {
    const jacobian = included.flatMap((index) => rowJacobians[index]);
    const step = dampedGaussNewtonStep(
      jacobian,
      model.residuals(x, sizes, included),
      damping,
      model.isFree,
    );
    const trial = model.clamp(x.map((value, index) => value + step[index]));
    if (largestPredictedChange(jacobian, x, trial) < settings.toleranceMm) break;
    const trialSizes = model.sizesAt(trial);
    trial[SEGMENT_OFFSET] = model.bestOffset(trialSizes, included);
    const trialSumOfSquares = sumOfSquaresOf(model.residuals(trial, trialSizes, included));
    if (trialSumOfSquares < sumOfSquares) {
      x = trial;
      sizes = trialSizes;
      sumOfSquares = trialSumOfSquares;
      damping = Math.max(damping / 5, 1e-9);
      failures = 0;
      if (settings.refreshOnAccept) rowJacobians = model.rowJacobians(x, sizes);
      isFresh = settings.refreshOnAccept;
    } else if (!isFresh) {
      // A stale Jacobian may point the wrong way: refresh it before damping harder.
      rowJacobians = model.rowJacobians(x, sizes);
      isFresh = true;
    } else {
      // Near the optimum the sizes' own roughness (a few hundredths of a millimetre, where
      // the zone's edge crosses voxel centres) stops any further gain: give up after a few.
      failures++;
      damping *= 10;
      if (failures >= MAX_FAILURES || damping > MAX_DAMPING) break;
    }
  }
  return { x, sizes, sumOfSquares, rowJacobians };
}

function sumOfSquaresOf(values: readonly number[]): number {
  return values.reduce((sum, value) => sum + value * value, 0);
}

/** max |J·(to − from)|: how far the step would move any fitted size, millimetres. */
function largestPredictedChange(
  jacobian: readonly (readonly number[])[],
  from: Readonly<ParameterVector>,
  to: Readonly<ParameterVector>,
): number {
  let largest = 0;
  for (const row of jacobian) {
    let change = 0;
    for (let index = 0; index < row.length; index++)
      change += row[index] * (to[index] - from[index]);
    largest = Math.max(largest, Math.abs(change));
  }
  return largest;
}
