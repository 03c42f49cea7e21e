import { describe, expect, it } from 'vitest';
import { albiGrade, albiResult, albiScore } from './albi';
import { albuminToGL, bilirubinToUmolL } from './units';

const JOHNSON_2015 = 'Johnson PJ et al., J Clin Oncol 2015;33:550';

describe(`worked examples computed from the formula of ${JOHNSON_2015} [C]`, () => {
  it.each([
    { bilirubinUmolL: 10, albuminGL: 40, score: -2.74, grade: 1 },
    { bilirubinUmolL: 20, albuminGL: 35, score: -2.116, grade: 2 },
    { bilirubinUmolL: 50, albuminGL: 25, score: -1.004, grade: 3 },
  ])(
    'scores bilirubin $bilirubinUmolL µmol/L, albumin $albuminGL g/L as $score, grade $grade',
    ({ bilirubinUmolL, albuminGL, score, grade }) => {
      expect(albiResult({ bilirubinUmolL, albuminGL })).toEqual({ score, grade });
    },
  );

  it('keeps the unrounded score: 0.66 · log10(20) − 0.085 · 35 = −2.11632 [C]', () => {
    expect(albiScore({ bilirubinUmolL: 20, albuminGL: 35 })).toBeCloseTo(-2.11632, 5);
  });
});

describe(`grade cut-offs, ${JOHNSON_2015}: 1 ≤ −2.60 < 2 ≤ −1.39 < 3`, () => {
  it.each([
    { score: -3.5, grade: 1 },
    { score: -2.6, grade: 1 },
    { score: -2.599, grade: 2 },
    { score: -1.39, grade: 2 },
    { score: -1.389, grade: 3 },
    { score: 0.2, grade: 3 },
  ])('puts a score of $score in grade $grade', ({ score, grade }) => {
    expect(albiGrade(score)).toBe(grade);
  });

  it('grades the reported 3-decimal score, so −2.5997 is shown as −2.600, grade 1', () => {
    const input = { bilirubinUmolL: 10, albuminGL: 38.3494 };
    expect(albiScore(input)).toBeCloseTo(-2.5997, 4);
    expect(albiResult(input)).toEqual({ score: -2.6, grade: 1 });
  });
});

describe('input in conventional units, converted with ×17.1 and ×10 (common practice)', () => {
  it('scores bili 2 mg/dL (34.2 µmol/L), albumin 3.5 g/dL (35 g/L) as −1.963, grade 2 [C]', () => {
    const result = albiResult({
      bilirubinUmolL: bilirubinToUmolL({ value: 2, unit: 'mg/dL' }),
      albuminGL: albuminToGL({ value: 3.5, unit: 'g/dL' }),
    });
    expect(result).toEqual({ score: -1.963, grade: 2 });
  });
});

describe('refused inputs', () => {
  it.each([
    { name: 'a bilirubin of 0, whose logarithm is undefined', bilirubinUmolL: 0, albuminGL: 40 },
    { name: 'a negative bilirubin', bilirubinUmolL: -5, albuminGL: 40 },
    { name: 'a negative albumin', bilirubinUmolL: 10, albuminGL: -1 },
    { name: 'an albumin that is not a number', bilirubinUmolL: 10, albuminGL: Number.NaN },
  ])('throws for $name', ({ bilirubinUmolL, albuminGL }) => {
    expect(() => albiScore({ bilirubinUmolL, albuminGL })).toThrow(RangeError);
  });

  it('refuses to grade a score that is not a number', () => {
    expect(() => albiGrade(Number.NaN)).toThrow(RangeError);
  });
});
