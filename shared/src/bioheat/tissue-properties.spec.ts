import { describe, expect, it } from 'vitest';
import {
  LIVER_TISSUE,
  checkTissueProperties,
  perfusionLengthM,
  thermalDiffusivityM2PerS,
} from './tissue-properties';

describe('liver properties (IT’IS database values; perfusion 6.4e-3 1/s from memory)', () => {
  it('has a perfusion length of 4.409 mm (Nyborg WL, Phys Med Biol 1988;33:785 [C])', () => {
    expect(perfusionLengthM(LIVER_TISSUE) * 1000).toBeCloseTo(4.409, 3);
  });

  it('has a thermal diffusivity k/(ρc) = 0.52 / (1079 × 3540) = 1.361e-7 m²/s', () => {
    expect(thermalDiffusivityM2PerS(LIVER_TISSUE)).toBeCloseTo(1.3614e-7, 10);
  });

  it('has no perfusion length without perfusion', () => {
    expect(perfusionLengthM({ ...LIVER_TISSUE, perfusionPerS: 0 })).toBe(Infinity);
  });

  it('refuses properties out of range, naming the field', () => {
    expect(() => checkTissueProperties({ ...LIVER_TISSUE, conductivityWPerMK: 0 })).toThrow(
      /conductivityWPerMK/,
    );
    expect(() => checkTissueProperties({ ...LIVER_TISSUE, perfusionPerS: -1 })).toThrow(
      /perfusionPerS/,
    );
    expect(() => checkTissueProperties({ ...LIVER_TISSUE, arterialTemperatureC: NaN })).toThrow(
      /arterialTemperatureC/,
    );
  });
});
