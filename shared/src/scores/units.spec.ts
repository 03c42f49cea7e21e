import { describe, expect, it } from 'vitest';
import {
  albuminToGDl,
  albuminToGL,
  bilirubinToMgDl,
  bilirubinToUmolL,
  creatinineToMgDl,
  creatinineToUmolL,
  type BilirubinUnit,
  type Measured,
} from './units';

// Factors: bilirubin 17.1, creatinine 88.4 (common practice: the usual laboratory conversion
// factors), albumin 10 (definition of the units).
describe('bilirubin conversion, 1 mg/dL = 17.1 µmol/L (common practice)', () => {
  it.each([
    { value: 1, expectedUmolL: 17.1 },
    { value: 2, expectedUmolL: 34.2 },
    { value: 3, expectedUmolL: 51.3 },
    { value: 0, expectedUmolL: 0 },
  ])('turns $value mg/dL into $expectedUmolL µmol/L', ({ value, expectedUmolL }) => {
    expect(bilirubinToUmolL({ value, unit: 'mg/dL' })).toBe(expectedUmolL);
  });

  it.each([
    { value: 17.1, expectedMgDl: 1 },
    { value: 34.2, expectedMgDl: 2 },
    { value: 51.3, expectedMgDl: 3 },
    { value: 85.5, expectedMgDl: 5 },
  ])('turns $value µmol/L into exactly $expectedMgDl mg/dL', ({ value, expectedMgDl }) => {
    expect(bilirubinToMgDl({ value, unit: 'umol/L' })).toBe(expectedMgDl);
  });

  it('leaves a value already in the wanted unit as it is', () => {
    expect(bilirubinToMgDl({ value: 1.37, unit: 'mg/dL' })).toBe(1.37);
    expect(bilirubinToUmolL({ value: 23.4, unit: 'umol/L' })).toBe(23.4);
  });

  it('returns the value it started from after a round trip', () => {
    const umolL = bilirubinToUmolL({ value: 2.35, unit: 'mg/dL' });
    expect(bilirubinToMgDl({ value: umolL, unit: 'umol/L' })).toBe(2.35);
  });

  it('refuses a unit it does not know', () => {
    const measured = { value: 1, unit: 'mmol/L' } as unknown as Measured<BilirubinUnit>;
    expect(() => bilirubinToMgDl(measured)).toThrow(RangeError);
  });
});

describe('creatinine conversion, 1 mg/dL = 88.4 µmol/L (common practice)', () => {
  it.each([
    { value: 1, expectedUmolL: 88.4 },
    { value: 4, expectedUmolL: 353.6 },
    { value: 1.5, expectedUmolL: 132.6 },
  ])('turns $value mg/dL into $expectedUmolL µmol/L', ({ value, expectedUmolL }) => {
    expect(creatinineToUmolL({ value, unit: 'mg/dL' })).toBe(expectedUmolL);
  });

  it.each([
    { value: 88.4, expectedMgDl: 1 },
    { value: 353.6, expectedMgDl: 4 },
    { value: 132.6, expectedMgDl: 1.5 },
  ])('turns $value µmol/L into $expectedMgDl mg/dL', ({ value, expectedMgDl }) => {
    expect(creatinineToMgDl({ value, unit: 'umol/L' })).toBe(expectedMgDl);
  });

  it('leaves a value in mg/dL as it is', () => {
    expect(creatinineToMgDl({ value: 0.86, unit: 'mg/dL' })).toBe(0.86);
  });
});

describe('albumin conversion, 1 g/dL = 10 g/L (definition of the units)', () => {
  it.each([
    { value: 3.5, expectedGL: 35 },
    { value: 2.8, expectedGL: 28 },
    { value: 4.1, expectedGL: 41 },
  ])('turns $value g/dL into $expectedGL g/L', ({ value, expectedGL }) => {
    expect(albuminToGL({ value, unit: 'g/dL' })).toBe(expectedGL);
  });

  it.each([
    { value: 35, expectedGDl: 3.5 },
    { value: 28, expectedGDl: 2.8 },
    { value: 41, expectedGDl: 4.1 },
  ])('turns $value g/L into $expectedGDl g/dL', ({ value, expectedGDl }) => {
    expect(albuminToGDl({ value, unit: 'g/L' })).toBe(expectedGDl);
  });

  it('leaves a value already in the wanted unit as it is', () => {
    expect(albuminToGDl({ value: 3.3, unit: 'g/dL' })).toBe(3.3);
    expect(albuminToGL({ value: 33, unit: 'g/L' })).toBe(33);
  });
});
