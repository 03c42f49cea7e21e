/**
 * Laboratory unit conversions for the liver-function scores.
 *
 * Factors (common practice, as used with the ALBI and MELD formulas):
 * - bilirubin: 1 mg/dL = 17.1 µmol/L (molar mass about 584.7 g/mol),
 * - creatinine: 1 mg/dL = 88.4 µmol/L (molar mass about 113.1 g/mol),
 * - albumin: 1 g/dL = 10 g/L (exact).
 *
 * Every result is rounded to 9 decimal places. That is far below any laboratory's precision
 * and removes binary floating-point noise (51.3 / 17.1 evaluates to 2.9999999999999996), so a
 * value entered in µmol/L that sits on a score boundary scores exactly like the same value
 * entered in mg/dL.
 */

/** A laboratory value together with the unit it was reported in. */
export type Measured<U> = { value: number; unit: U };

/** Units accepted for bilirubin; `umol/L` is µmol/L spelled in ASCII. */
export type BilirubinUnit = 'mg/dL' | 'umol/L';
/** Units accepted for albumin. */
export type AlbuminUnit = 'g/dL' | 'g/L';
/** Units accepted for creatinine; `umol/L` is µmol/L spelled in ASCII. */
export type CreatinineUnit = 'mg/dL' | 'umol/L';

/** µmol/L of bilirubin in 1 mg/dL. */
export const BILIRUBIN_UMOL_L_PER_MG_DL = 17.1;
/** µmol/L of creatinine in 1 mg/dL. */
export const CREATININE_UMOL_L_PER_MG_DL = 88.4;
/** g/L of albumin in 1 g/dL. */
export const ALBUMIN_G_L_PER_G_DL = 10;

const DECIMAL_PLACES_KEPT = 1e9;

function withoutFloatingPointNoise(value: number): number {
  return Math.round(value * DECIMAL_PLACES_KEPT) / DECIMAL_PLACES_KEPT;
}

function unknownUnit(unit: never): never {
  throw new RangeError(`Unknown unit: ${String(unit)}`);
}

/** Bilirubin in mg/dL, from a value in mg/dL or µmol/L (÷ 17.1). */
export function bilirubinToMgDl(measured: Measured<BilirubinUnit>): number {
  switch (measured.unit) {
    case 'mg/dL':
      return measured.value;
    case 'umol/L':
      return withoutFloatingPointNoise(measured.value / BILIRUBIN_UMOL_L_PER_MG_DL);
    default:
      return unknownUnit(measured.unit);
  }
}

/** Bilirubin in µmol/L, from a value in mg/dL (× 17.1) or µmol/L. ALBI takes µmol/L. */
export function bilirubinToUmolL(measured: Measured<BilirubinUnit>): number {
  switch (measured.unit) {
    case 'mg/dL':
      return withoutFloatingPointNoise(measured.value * BILIRUBIN_UMOL_L_PER_MG_DL);
    case 'umol/L':
      return measured.value;
    default:
      return unknownUnit(measured.unit);
  }
}

/** Albumin in g/dL, from a value in g/dL or g/L (÷ 10). */
export function albuminToGDl(measured: Measured<AlbuminUnit>): number {
  switch (measured.unit) {
    case 'g/dL':
      return measured.value;
    case 'g/L':
      return withoutFloatingPointNoise(measured.value / ALBUMIN_G_L_PER_G_DL);
    default:
      return unknownUnit(measured.unit);
  }
}

/** Albumin in g/L, from a value in g/dL (× 10) or g/L. ALBI takes g/L. */
export function albuminToGL(measured: Measured<AlbuminUnit>): number {
  switch (measured.unit) {
    case 'g/dL':
      return withoutFloatingPointNoise(measured.value * ALBUMIN_G_L_PER_G_DL);
    case 'g/L':
      return measured.value;
    default:
      return unknownUnit(measured.unit);
  }
}

/** Creatinine in mg/dL, from a value in mg/dL or µmol/L (÷ 88.4). MELD takes mg/dL. */
export function creatinineToMgDl(measured: Measured<CreatinineUnit>): number {
  switch (measured.unit) {
    case 'mg/dL':
      return measured.value;
    case 'umol/L':
      return withoutFloatingPointNoise(measured.value / CREATININE_UMOL_L_PER_MG_DL);
    default:
      return unknownUnit(measured.unit);
  }
}

/** Creatinine in µmol/L, from a value in mg/dL (× 88.4) or µmol/L. */
export function creatinineToUmolL(measured: Measured<CreatinineUnit>): number {
  switch (measured.unit) {
    case 'mg/dL':
      return withoutFloatingPointNoise(measured.value * CREATININE_UMOL_L_PER_MG_DL);
    case 'umol/L':
      return measured.value;
    default:
      return unknownUnit(measured.unit);
  }
}
