import { describe, expect, it } from 'vitest';
import { DamageRateTable } from './damage-rate-table';
import { arrheniusRatePerS, cem43RateMinutesPerS } from './thermal-damage';
import { LIVER_ARRHENIUS } from './tissue-properties';

describe('tabulated damage rates against the formulas of thermal-damage.ts', () => {
  const absolute = new DamageRateTable(LIVER_ARRHENIUS, 37, false);
  const aboveArterial = new DamageRateTable(LIVER_ARRHENIUS, 37, true);
  // Between table entries: every 0.0037 K from 25 °C to 200 °C.
  const temperaturesC = Array.from({ length: 47_000 }, (_, index) => 25 + index * 0.0037);

  it('interpolates the Arrhenius rate within 3e-5 (the (g′δ)²/8 bound of the table)', () => {
    let worst = 0;
    for (const temperatureC of temperaturesC) {
      const exact = arrheniusRatePerS(temperatureC);
      worst = Math.max(worst, Math.abs(absolute.omegaRatePerS(temperatureC) / exact - 1));
    }
    expect(worst).toBeLessThan(3e-5);
  });

  it('interpolates the CEM43 rate within 3e-5, the 43 °C break included', () => {
    let worst = 0;
    for (const temperatureC of temperaturesC) {
      const exact = cem43RateMinutesPerS(temperatureC);
      worst = Math.max(worst, Math.abs(absolute.cem43RateMinutesPerS(temperatureC) / exact - 1));
    }
    expect(worst).toBeLessThan(3e-5);
  });

  it('counts no Ω at or below body temperature when the arterial rate is taken off', () => {
    expect(aboveArterial.omegaRatePerS(37)).toBe(0);
    expect(aboveArterial.omegaRatePerS(30)).toBe(0);
    const at50 = arrheniusRatePerS(50) - arrheniusRatePerS(37);
    expect(aboveArterial.omegaRatePerS(50) / at50).toBeCloseTo(1, 4);
  });
});
