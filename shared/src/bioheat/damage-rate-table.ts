/**
 * Tabulated damage rates for the solver's inner loop. Math.exp costs ~20 ns on this kind of
 * machine and the loop would need two per voxel per step; a table read with linear
 * interpolation costs a few.
 *
 * Rates are tabulated every 0.01 K from 20 K below to 180 K above the arterial temperature;
 * linear interpolation of exp(g(T)) over a step δ errs by at most (g′δ)²/8 relative (Taylor):
 * with g′ = Ea/(R·T²) ≤ 0.36 /K for liver in that range and ln 4 /K for CEM43, below 3e-5.
 * Temperatures beyond the table take its end values: 180 K above 37 °C the Arrhenius rate
 * (~2e12 /s) and the CEM43 rate (~1e51 min/s) already drive both to their ceilings within one
 * step, so nothing that matters is lost; 20 K below, both rates are negligible.
 */
import { arrheniusRatePerS, cem43RateMinutesPerS } from './thermal-damage';
import type { ArrheniusCoefficients } from './tissue-properties';

/** Table entries per kelvin (a step of 0.01 K). */
export const RATE_TABLE_STEPS_PER_K = 100;
/** Span of the table below the arterial temperature, kelvin. */
export const RATE_TABLE_BELOW_K = 20;
/** Span of the table above the arterial temperature, kelvin. */
const RATE_TABLE_ABOVE_K = 180;

/** dΩ/dt and dCEM43/dt tabulated against the rise above the arterial temperature. */
export class DamageRateTable {
  /** dΩ/dt at rise (index/100 − 20) K, 1/s. */
  readonly omegaRates: Float64Array;
  /** dCEM43/dt at rise (index/100 − 20) K, minutes per second. */
  readonly cem43Rates: Float64Array;
  /** Largest table position: the last entry's index. */
  readonly lastPosition: number;
  private readonly baselineOmegaRate: number;

  /**
   * `baselineFromArterial`: take the rate at the arterial temperature (°C) off the Arrhenius
   * rate (never below 0), so that tissue at body temperature accrues no Ω.
   */
  constructor(
    private readonly coefficients: Readonly<ArrheniusCoefficients>,
    private readonly arterialC: number,
    baselineFromArterial: boolean,
  ) {
    const size = (RATE_TABLE_BELOW_K + RATE_TABLE_ABOVE_K) * RATE_TABLE_STEPS_PER_K + 1;
    this.lastPosition = size - 1;
    this.baselineOmegaRate = baselineFromArterial ? arrheniusRatePerS(arterialC, coefficients) : 0;
    this.omegaRates = new Float64Array(size);
    this.cem43Rates = new Float64Array(size);
    for (let index = 0; index < size; index++) {
      const temperatureC = arterialC - RATE_TABLE_BELOW_K + index / RATE_TABLE_STEPS_PER_K;
      this.omegaRates[index] = this.exactOmegaRatePerS(temperatureC);
      this.cem43Rates[index] = cem43RateMinutesPerS(temperatureC);
    }
  }

  /** Table position of a temperature (°C), clamped to the table. */
  position(temperatureC: number): number {
    const position = (temperatureC - this.arterialC + RATE_TABLE_BELOW_K) * RATE_TABLE_STEPS_PER_K;
    return position < 0 ? 0 : position > this.lastPosition ? this.lastPosition : position;
  }

  /** dΩ/dt at a temperature (°C), 1/s, interpolated in the table. */
  omegaRatePerS(temperatureC: number): number {
    return interpolate(this.omegaRates, this.position(temperatureC));
  }

  /** dCEM43/dt at a temperature (°C), minutes per second, interpolated in the table. */
  cem43RateMinutesPerS(temperatureC: number): number {
    return interpolate(this.cem43Rates, this.position(temperatureC));
  }

  /** dΩ/dt by the formula (°C in, 1/s out), with the baseline taken off when asked. */
  exactOmegaRatePerS(temperatureC: number): number {
    const rate = arrheniusRatePerS(temperatureC, this.coefficients) - this.baselineOmegaRate;
    return rate > 0 ? rate : 0;
  }
}

/** Linear interpolation at a position within [0, table.length − 1]. */
export function interpolate(table: Float64Array, position: number): number {
  const index = Math.min(position | 0, table.length - 2);
  const below = table[index];
  return below + (position - index) * (table[index + 1] - below);
}
