/**
 * Thermal damage of tissue from its temperature history: the Arrhenius damage integral Ω
 * (Henriques & Moritz 1947) and the CEM43 thermal dose (Sapareto & Dewey, Int J Radiat Oncol
 * Biol Phys 1984;10:787). Temperatures in °C, times in seconds unless the name says minutes.
 *
 * The two measures answer different questions and their thresholds disagree by design (Pearce,
 * Crit Rev Biomed Eng 2010;38:1): the zone model reports both and draws its zone from Ω ≥ 1.
 */
import {
  GAS_CONSTANT_J_PER_MOL_K,
  KELVIN_OFFSET,
  LIVER_ARRHENIUS,
  type ArrheniusCoefficients,
} from './tissue-properties';

/** Ω at which the zone counts tissue as coagulated: survival e^−1, about 63 % cell death. */
export const DAMAGE_THRESHOLD_OMEGA = 1;

/** Temperature at and above which CEM43's base R is 0.5 (0.25 below), °C. */
export const CEM43_BREAKPOINT_C = 43;

/**
 * Rate of the Arrhenius damage integral at a constant temperature: dΩ/dt = A·exp(−Ea/(R·T)),
 * T in kelvin; 1/s. Temperature in °C.
 */
export function arrheniusRatePerS(
  temperatureC: number,
  coefficients: Readonly<ArrheniusCoefficients> = LIVER_ARRHENIUS,
): number {
  return (
    coefficients.frequencyFactorPerS *
    Math.exp(
      -coefficients.activationEnergyJPerMol /
        (GAS_CONSTANT_J_PER_MOL_K * (temperatureC + KELVIN_OFFSET)),
    )
  );
}

/**
 * Ω gained by holding a temperature (°C) for a duration (s): A·exp(−Ea/(R·T))·Δt, no unit.
 * One step of the damage integral with the temperature constant over the step.
 */
export function arrheniusDamageIncrement(
  temperatureC: number,
  durationS: number,
  coefficients: Readonly<ArrheniusCoefficients> = LIVER_ARRHENIUS,
): number {
  return arrheniusRatePerS(temperatureC, coefficients) * durationS;
}

/** Seconds at a constant temperature (°C) until Ω reaches `omega` (default 1). */
export function timeToArrheniusDamageS(
  temperatureC: number,
  omega = DAMAGE_THRESHOLD_OMEGA,
  coefficients: Readonly<ArrheniusCoefficients> = LIVER_ARRHENIUS,
): number {
  return omega / arrheniusRatePerS(temperatureC, coefficients);
}

/** Survival fraction exp(−Ω) of a first-order damage process, 0–1. */
export function survivalFraction(omega: number): number {
  return Math.exp(-omega);
}

/**
 * Rate of the CEM43 thermal dose: R^(43 − T) equivalent minutes at 43 °C per minute, with
 * R = 0.5 at T ≥ 43 °C and 0.25 below (Sapareto & Dewey 1984); returned per second
 * (minutes/s). Temperature in °C.
 */
export function cem43RateMinutesPerS(temperatureC: number): number {
  const logBase = temperatureC >= CEM43_BREAKPOINT_C ? Math.LN2 : 2 * Math.LN2;
  return Math.exp(-logBase * (CEM43_BREAKPOINT_C - temperatureC)) / 60;
}

/** CEM43 minutes gained by holding a temperature (°C) for a duration (s). */
export function cem43Increment(temperatureC: number, durationS: number): number {
  return cem43RateMinutesPerS(temperatureC) * durationS;
}

/**
 * One step of both damage measures for every voxel, the temperature constant over the step:
 * `omega[i] += A·exp(−Ea/(R·T_i))·Δt`, `cem43[i] += R^(43 − T_i)·Δt/60`. Temperatures °C, step
 * seconds; the arrays are updated in place and must have one length.
 */
export function accumulateThermalDamage(
  omega: Float32Array | Float64Array,
  cem43Minutes: Float32Array | Float64Array,
  temperaturesC: Float32Array | Float64Array,
  timeStepS: number,
  coefficients: Readonly<ArrheniusCoefficients> = LIVER_ARRHENIUS,
): void {
  if (omega.length !== temperaturesC.length || cem43Minutes.length !== temperaturesC.length) {
    throw new RangeError(
      `omega (${omega.length}), cem43Minutes (${cem43Minutes.length}) and temperaturesC ` +
        `(${temperaturesC.length}) must have one length`,
    );
  }
  if (!(timeStepS >= 0) || !Number.isFinite(timeStepS)) {
    throw new RangeError(`timeStepS must be 0 or more, got ${timeStepS}`);
  }
  for (let index = 0; index < temperaturesC.length; index++) {
    const temperatureC = temperaturesC[index];
    omega[index] += arrheniusRatePerS(temperatureC, coefficients) * timeStepS;
    cem43Minutes[index] += cem43RateMinutesPerS(temperatureC) * timeStepS;
  }
}
