/**
 * Thermal and damage properties of liver used by the physics zone model (simulate-zone.ts).
 * SI units throughout: metres, kilograms, seconds, kelvin (temperatures in degrees Celsius
 * where the name says so).
 */

/** Thermal properties of a homogeneous tissue in the Pennes bioheat equation. */
export interface TissueProperties {
  /** Thermal conductivity k, W/m/K. */
  conductivityWPerMK: number;
  /** Density ρ, kg/m³. */
  densityKgPerM3: number;
  /** Specific heat capacity c, J/kg/K. */
  specificHeatJPerKgK: number;
  /** Blood perfusion rate ω_b, volume of blood per volume of tissue per second, 1/s. */
  perfusionPerS: number;
  /** Volumetric heat capacity of blood ρ_b·c_b, J/m³/K. */
  bloodHeatCapacityJPerM3K: number;
  /** Arterial blood temperature T_a, °C (also the tissue's starting temperature). */
  arterialTemperatureC: number;
}

/** Arrhenius coefficients of a first-order thermal damage process. */
export interface ArrheniusCoefficients {
  /** Frequency factor A, 1/s. */
  frequencyFactorPerS: number;
  /** Activation energy Ea, J/mol. */
  activationEnergyJPerMol: number;
}

/** Body temperature, °C: the start of every simulation and the temperature of blood. */
export const BODY_TEMPERATURE_C = 37;

/** Kelvin = degrees Celsius + 273.15 (SI definition). */
export const KELVIN_OFFSET = 273.15;

/**
 * Universal gas constant as used by the public RF-ablation models that quote the liver
 * coefficients below, J/mol/K (CODATA: 8.314462618). The worked times of thermal-damage.spec.ts
 * (513 s to Ω = 1 at 43 °C …) follow from 8.314; the CODATA value shifts them by 0.5 %.
 */
export const GAS_CONSTANT_J_PER_MOL_K = 8.314;

/**
 * Liver: k, ρ and c from the IT'IS tissue property database; ω_b ≈ 6.4e-3 1/s as used in
 * liver RF models (from memory); blood ρ_b·c_b = 1000 kg/m³ × 4180 J/kg/K (from memory);
 * T_a = 37 °C.
 */
export const LIVER_TISSUE: Readonly<TissueProperties> = Object.freeze({
  conductivityWPerMK: 0.52,
  densityKgPerM3: 1079,
  specificHeatJPerKgK: 3540,
  perfusionPerS: 6.4e-3,
  bloodHeatCapacityJPerM3K: 1000 * 4180,
  arterialTemperatureC: BODY_TEMPERATURE_C,
});

/**
 * Liver coagulation (Henriques & Moritz 1947 form; A = 7.39e39 1/s, Ea = 2.577e5 J/mol, widely
 * used in public RF models; attribution to Jacques' coagulation data from memory).
 */
export const LIVER_ARRHENIUS: Readonly<ArrheniusCoefficients> = Object.freeze({
  frequencyFactorPerS: 7.39e39,
  activationEnergyJPerMol: 2.577e5,
});

/** Thermal diffusivity α = k / (ρc), m²/s. */
export function thermalDiffusivityM2PerS(tissue: Readonly<TissueProperties>): number {
  return tissue.conductivityWPerMK / (tissue.densityKgPerM3 * tissue.specificHeatJPerKgK);
}

/**
 * Perfusion length L = √(k / (ω_b ρ_b c_b)), metres: the distance over which perfusion damps a
 * steady temperature rise by a factor e (Nyborg, Phys Med Biol 1988;33:785). Infinite without
 * perfusion.
 */
export function perfusionLengthM(tissue: Readonly<TissueProperties>): number {
  return Math.sqrt(
    tissue.conductivityWPerMK / (tissue.perfusionPerS * tissue.bloodHeatCapacityJPerM3K),
  );
}

/**
 * Throws a RangeError naming the first property that is not a finite number in its range
 * (k, ρ, c, ρ_b·c_b > 0; ω_b ≥ 0).
 */
export function checkTissueProperties(tissue: Readonly<TissueProperties>): void {
  const positive: (keyof TissueProperties)[] = [
    'conductivityWPerMK',
    'densityKgPerM3',
    'specificHeatJPerKgK',
    'bloodHeatCapacityJPerM3K',
  ];
  for (const name of positive) {
    if (!(tissue[name] > 0) || !Number.isFinite(tissue[name])) {
      throw new RangeError(`tissue.${name} must be a positive number, got ${tissue[name]}`);
    }
  }
  if (!(tissue.perfusionPerS >= 0) || !Number.isFinite(tissue.perfusionPerS)) {
    throw new RangeError(`tissue.perfusionPerS must be 0 or more, got ${tissue.perfusionPerS}`);
  }
  if (!Number.isFinite(tissue.arterialTemperatureC)) {
    throw new RangeError('tissue.arterialTemperatureC must be a finite number');
  }
}
