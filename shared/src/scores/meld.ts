/**
 * MELD and MELD-Na as the UNOS/OPTN policy computed them from 2016 (MELD: UNOS/OPTN policy,
 * after Kamath PS et al., Hepatology 2001, from memory; MELD-Na: Kim WR et al., N Engl J Med
 * 2008;359:1018). OPTN has allocated with MELD 3.0 since 2023 (from memory); these two scores
 * remain the ones tumour boards quote and the ones the published worked examples use.
 *
 * Order of operations, chosen so that the worked examples of meld.spec.ts (computed by hand
 * from those formulas) all hold:
 * 1. Creatinine, bilirubin and INR below 1 are raised to 1; creatinine above 4.0 mg/dL, or any
 *    creatinine after dialysis at least twice in the past week, becomes 4.0 mg/dL.
 * 2. MELD(i) = 0.957 ln(Cr) + 0.378 ln(bili) + 1.120 ln(INR) + 0.643, rounded to the tenth and
 *    multiplied by 10: an integer (6 at the least).
 * 3. MELD is that integer capped at 40, as UNOS caps it.
 * 4. MELD-Na starts from the integer of step 2 (not the unrounded MELD(i)): when it exceeds 11,
 *    MELD-Na = MELD + 1.32 (137 − Na) − 0.033 · MELD · (137 − Na) with Na clamped to 125–137,
 *    rounded to the nearest integer, then capped at 40. At 11 or below MELD-Na equals MELD.
 *    Starting from the unrounded MELD(i) would give 14, not 15, for the worked example
 *    (Cr 1.0, bili 1.5, INR 1.5, Na 135); the integer gives 15.
 *    Capping MELD at 40 before or after the sodium step gives the same MELD-Na: the sodium
 *    term is (137 − Na)(1.32 − 0.033 · MELD), which is ≥ 0 up to MELD 40 and < 0 beyond, so
 *    MELD-Na ≤ 40 exactly when MELD ≤ 40.
 */

/** Laboratory values for MELD. */
export interface MeldInput {
  /** Serum creatinine, mg/dL. */
  creatinineMgDl: number;
  /** Serum total bilirubin, mg/dL. */
  bilirubinMgDl: number;
  /** International normalised ratio, no unit. */
  inr: number;
  /**
   * Dialysis at least twice in the past seven days. UNOS also counts 24 hours of continuous
   * veno-venous haemodialysis in that week (from memory); callers map that to `true`.
   */
  dialysisTwiceInPastWeek: boolean;
}

/** Laboratory values for MELD-Na: those of MELD plus serum sodium. */
export interface MeldNaInput extends MeldInput {
  /** Serum sodium, mmol/L (numerically equal to mEq/L). */
  sodiumMmolL: number;
}

/** Highest MELD and MELD-Na that UNOS reports. */
export const MELD_MAXIMUM = 40;
/** MELD-Na adds the sodium term only above this MELD. */
export const MELD_NA_APPLIES_ABOVE = 11;

const LABORATORY_FLOOR = 1;
const CREATININE_CEILING_MG_DL = 4;
const SODIUM_FLOOR_MMOL_L = 125;
const SODIUM_CEILING_MMOL_L = 137;

function requireNonNegative(name: string, value: number): void {
  if (!Number.isFinite(value) || value < 0) {
    throw new RangeError(`${name} must be a finite number of at least 0, got ${value}`);
  }
}

function requireValidMeldInput(input: MeldInput): void {
  requireNonNegative('creatinineMgDl', input.creatinineMgDl);
  requireNonNegative('bilirubinMgDl', input.bilirubinMgDl);
  requireNonNegative('inr', input.inr);
}

/**
 * Unrounded MELD(i) after the UNOS bounds: values below 1 raised to 1, creatinine capped at
 * 4.0 mg/dL or set to 4.0 after dialysis at least twice in the past week.
 * Creatinine and bilirubin in mg/dL, INR without unit. Throws a RangeError for a negative or
 * non-finite value.
 */
export function meldInitialScore(input: MeldInput): number {
  requireValidMeldInput(input);
  const creatinineMgDl = input.dialysisTwiceInPastWeek
    ? CREATININE_CEILING_MG_DL
    : Math.min(Math.max(input.creatinineMgDl, LABORATORY_FLOOR), CREATININE_CEILING_MG_DL);
  const bilirubinMgDl = Math.max(input.bilirubinMgDl, LABORATORY_FLOOR);
  const inr = Math.max(input.inr, LABORATORY_FLOOR);
  return (
    0.957 * Math.log(creatinineMgDl) +
    0.378 * Math.log(bilirubinMgDl) +
    1.12 * Math.log(inr) +
    0.643
  );
}

/** MELD(i) rounded to the tenth and multiplied by 10, before the cap at 40. */
function uncappedMeld(input: MeldInput): number {
  return Math.round(meldInitialScore(input) * 10);
}

/**
 * MELD, an integer from 6 to 40: MELD(i) rounded to the tenth, × 10, capped at 40.
 * Creatinine and bilirubin in mg/dL, INR without unit. Throws a RangeError for a negative or
 * non-finite value.
 */
export function meldScore(input: MeldInput): number {
  return Math.min(uncappedMeld(input), MELD_MAXIMUM);
}

/**
 * MELD-Na, an integer from 6 to 40 (Kim 2008 formula as UNOS applied it): the sodium term is
 * added to the integer MELD only when that exceeds 11; sodium is clamped to 125–137 mmol/L;
 * the result is rounded to the nearest integer and capped at 40. Creatinine and bilirubin in
 * mg/dL, INR without unit, sodium in mmol/L. Throws a RangeError for a negative or non-finite
 * laboratory value or a sodium that is not a positive finite number.
 */
export function meldNaScore(input: MeldNaInput): number {
  if (!Number.isFinite(input.sodiumMmolL) || input.sodiumMmolL <= 0) {
    throw new RangeError(`sodiumMmolL must be a positive finite number, got ${input.sodiumMmolL}`);
  }
  const meld = uncappedMeld(input);
  if (meld <= MELD_NA_APPLIES_ABOVE) {
    return meld;
  }
  const sodiumMmolL = Math.min(
    Math.max(input.sodiumMmolL, SODIUM_FLOOR_MMOL_L),
    SODIUM_CEILING_MMOL_L,
  );
  const sodiumDeficit = SODIUM_CEILING_MMOL_L - sodiumMmolL;
  const meldNa = meld + 1.32 * sodiumDeficit - 0.033 * meld * sodiumDeficit;
  return Math.min(Math.round(meldNa), MELD_MAXIMUM);
}
