/**
 * ALBI score and grade (Johnson PJ et al., J Clin Oncol 2015;33:550):
 * ALBI = 0.66 · log10(bilirubin µmol/L) − 0.085 · albumin g/L;
 * grade 1 at −2.60 or below, grade 2 above −2.60 up to −1.39, grade 3 above −1.39.
 *
 * Rounding: `albiScore` is unrounded. `albiResult` reports the score rounded to 3 decimals
 * and takes the grade from that reported score, so the score and grade shown together never
 * disagree at a cut-off (a difference below 0.0005, far under laboratory precision).
 */

/** ALBI grade. */
export type AlbiGrade = 1 | 2 | 3;

/** Values for ALBI, in the SI units of the original paper. */
export interface AlbiInput {
  /** Serum total bilirubin, µmol/L. */
  bilirubinUmolL: number;
  /** Serum albumin, g/L. */
  albuminGL: number;
}

/** ALBI score rounded to 3 decimals, and its grade. */
export interface AlbiResult {
  score: number;
  grade: AlbiGrade;
}

/** Highest score of grade 1. */
export const ALBI_GRADE_1_UPPER_BOUND = -2.6;
/** Highest score of grade 2. */
export const ALBI_GRADE_2_UPPER_BOUND = -1.39;

/**
 * Unrounded ALBI score. Bilirubin in µmol/L (must be above 0: the score takes its logarithm),
 * albumin in g/L (at least 0). Throws a RangeError otherwise.
 */
export function albiScore(input: AlbiInput): number {
  if (!Number.isFinite(input.bilirubinUmolL) || input.bilirubinUmolL <= 0) {
    throw new RangeError(
      `bilirubinUmolL must be a positive finite number, got ${input.bilirubinUmolL}`,
    );
  }
  if (!Number.isFinite(input.albuminGL) || input.albuminGL < 0) {
    throw new RangeError(`albuminGL must be a finite number of at least 0, got ${input.albuminGL}`);
  }
  return 0.66 * Math.log10(input.bilirubinUmolL) - 0.085 * input.albuminGL;
}

/** ALBI grade of a score (no unit): 1 if ≤ −2.60, 2 if ≤ −1.39, otherwise 3. */
export function albiGrade(score: number): AlbiGrade {
  if (Number.isNaN(score)) {
    throw new RangeError('ALBI score must be a number');
  }
  if (score <= ALBI_GRADE_1_UPPER_BOUND) return 1;
  return score <= ALBI_GRADE_2_UPPER_BOUND ? 2 : 3;
}

/**
 * ALBI score rounded to 3 decimals and the grade of that rounded score. Bilirubin in µmol/L,
 * albumin in g/L; throws a RangeError as `albiScore` does.
 */
export function albiResult(input: AlbiInput): AlbiResult {
  // `+ 0` turns a rounded −0 into 0.
  const score = Math.round(albiScore(input) * 1000) / 1000 + 0;
  return { score, grade: albiGrade(score) };
}
