import { describe, expect, it } from 'vitest';
import {
  accumulateThermalDamage,
  arrheniusDamageIncrement,
  arrheniusRatePerS,
  cem43Increment,
  cem43RateMinutesPerS,
  survivalFraction,
  timeToArrheniusDamageS,
} from './thermal-damage';

const HENRIQUES_MORITZ = 'Henriques & Moritz 1947, liver A = 7.39e39 1/s, Ea = 2.577e5 J/mol';
const SAPARETO_DEWEY = 'Sapareto & Dewey, Int J Radiat Oncol Biol Phys 1984;10:787';

/** A value quoted with `decimals` decimals agrees when it rounds to the quote. */
function expectRoundsTo(value: number, quoted: number, decimals: number): void {
  expect(Math.abs(value - quoted)).toBeLessThanOrEqual(0.5 * 10 ** -decimals + 1e-12);
}

describe(`Arrhenius damage, computed from the formula [C] (${HENRIQUES_MORITZ})`, () => {
  it.each([
    { temperatureC: 43, seconds: 513, decimals: 0 },
    { temperatureC: 50, seconds: 61.4, decimals: 1 },
    { temperatureC: 55, seconds: 14.2, decimals: 1 },
    { temperatureC: 60, seconds: 3.45, decimals: 2 },
    { temperatureC: 70, seconds: 0.23, decimals: 2 },
  ])(
    'reaches Ω = 1 after $seconds s at $temperatureC °C',
    ({ temperatureC, seconds, decimals }) => {
      expectRoundsTo(timeToArrheniusDamageS(temperatureC), seconds, decimals);
    },
  );

  it('gives Ω = 17.4 for 60 s at 60 °C', () => {
    expectRoundsTo(arrheniusDamageIncrement(60, 60), 17.4, 1);
  });

  it('adds up steps at a constant temperature to one long step', () => {
    let omega = 0;
    for (let step = 0; step < 600; step++) omega += arrheniusDamageIncrement(60, 0.1);
    expect(omega).toBeCloseTo(arrheniusDamageIncrement(60, 60), 10);
  });

  it('answers the survival fraction e^−Ω: about 37 % survive at Ω = 1 (63 % cell death)', () => {
    expect(survivalFraction(1)).toBeCloseTo(0.3679, 4);
    expect(survivalFraction(0)).toBe(1);
  });

  it('has d ln(rate)/dT = Ea/(R·T²), 0.297 /K at 50 °C (derivative of the formula)', () => {
    const slopePerK = 2.577e5 / (8.314 * 323.15 ** 2);
    const ratio = arrheniusRatePerS(50.1) / arrheniusRatePerS(49.9);
    expect(Math.log(ratio) / 0.2).toBeCloseTo(slopePerK, 3);
  });
});

describe(`CEM43 thermal dose, computed from the formula [C] (${SAPARETO_DEWEY})`, () => {
  it.each([
    { temperatureC: 50, minutes: 10, dose: 1280 },
    { temperatureC: 47, minutes: 1, dose: 16 },
    { temperatureC: 41, minutes: 60, dose: 3.75 },
    // At 43 °C the dose is the time itself (R⁰ = 1): the common 240 min necrosis threshold.
    { temperatureC: 43, minutes: 240, dose: 240 },
  ])(
    'gives $dose equivalent minutes for $minutes min at $temperatureC °C',
    ({ temperatureC, minutes, dose }) => {
      expect(cem43Increment(temperatureC, minutes * 60)).toBeCloseTo(dose, 9);
    },
  );

  it('uses R = 0.5 from 43 °C up and R = 0.25 below', () => {
    expect(cem43RateMinutesPerS(44) / cem43RateMinutesPerS(43)).toBeCloseTo(2, 12);
    expect(cem43RateMinutesPerS(42) / cem43RateMinutesPerS(41)).toBeCloseTo(4, 12);
  });
});

describe('one damage step over a field', () => {
  it('adds the Arrhenius and CEM43 increments of each voxel', () => {
    const temperaturesC = Float64Array.from([37, 43, 50, 60]);
    const omega = new Float64Array(4).fill(0.5);
    const cem43 = new Float32Array(4);
    accumulateThermalDamage(omega, cem43, temperaturesC, 60);
    temperaturesC.forEach((temperatureC, index) => {
      expect(omega[index]).toBeCloseTo(0.5 + arrheniusDamageIncrement(temperatureC, 60), 9);
      expect(cem43[index]).toBeCloseTo(cem43Increment(temperatureC, 60), 4);
    });
    // 1 min at 50 °C: 2^7 = 128 equivalent minutes (Sapareto & Dewey's rule).
    expect(cem43[2]).toBeCloseTo(128, 3);
  });

  it('refuses fields of different lengths and a negative step', () => {
    const field = new Float64Array(3);
    expect(() => accumulateThermalDamage(field, new Float64Array(2), field, 1)).toThrow(
      /one length/,
    );
    expect(() => accumulateThermalDamage(field, field.slice(), field.slice(), -1)).toThrow(
      /timeStepS/,
    );
  });
});
