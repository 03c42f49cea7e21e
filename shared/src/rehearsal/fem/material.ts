/**
 * Material of the tissue solver: isotropic linear elasticity (Young's modulus, Poisson's ratio),
 * density for the lumped mass, and Rayleigh damping. SI units: pascals, kilograms per cubic
 * metre, 1/s and s.
 */
import { FemInputError } from './fem-errors';

/** Elastic, inertial and damping parameters of one homogeneous tissue. */
export interface TissueMaterial {
  /** Young's modulus E, Pa. */
  youngsModulusPa: number;
  /** Poisson's ratio ν, without unit, −1 < ν < 0.5. */
  poissonRatio: number;
  /** Density ρ, kg/m³ (lumped onto the nodes). */
  densityKgPerM3: number;
  /** Rayleigh mass coefficient α of C = α·M + β·K, 1/s. */
  massDampingPerS: number;
  /** Rayleigh stiffness coefficient β of C = α·M + β·K, s. */
  stiffnessDampingS: number;
}

/**
 * Liver defaults.
 *
 * - E = 6 kPa: healthy liver measured in vivo by elastography. Magnetic resonance elastography
 *   gives a shear stiffness of 2.09 ± 0.22 kPa in healthy volunteers (Venkatesh et al., J Magn
 *   Reson Imaging 2014;39:1–8), so E = 2μ(1 + ν) ≈ 6 kPa with ν = 0.45; transient elastography,
 *   which reports E directly, gives a normal range of 3.3–7.8 kPa (Del Poggio & Colombo, World J
 *   Gastroenterol 2009;15:1409–1414). Both are small-strain, dynamic (about 50–60 Hz) values of
 *   perfused liver; quasi-static ex-vivo measurements differ and fibrotic or cirrhotic liver is
 *   several times stiffer. A parameter, not a patient's value.
 * - ν = 0.45: liver is nearly incompressible (ν → 0.5); 0.45 is a usual modelling choice that
 *   keeps linear tetrahedra out of the worst volumetric locking (see README).
 * - ρ = 1060 kg/m³: soft-tissue/liver density of about 1050–1070 kg/m³ in Duck, Physical
 *   Properties of Tissue (Academic Press 1990), from memory; the bioheat module uses the IT'IS
 *   database's 1079 kg/m³ — the 2 % difference is immaterial here.
 * - Damping α = 0.5 1/s, β = 0.005 s: a modelling choice (not measured) that calms the mesh
 *   between breaths without visibly slowing it; backward Euler adds its own numerical damping.
 */
export const LIVER_MATERIAL: Readonly<TissueMaterial> = Object.freeze({
  youngsModulusPa: 6000,
  poissonRatio: 0.45,
  densityKgPerM3: 1060,
  massDampingPerS: 0.5,
  stiffnessDampingS: 0.005,
});

/** Lamé parameters λ and μ, Pa, of an isotropic linear material (standard relations). */
export function lameParameters(material: Readonly<TissueMaterial>): {
  lambdaPa: number;
  muPa: number;
} {
  const e = material.youngsModulusPa;
  const nu = material.poissonRatio;
  return { lambdaPa: (e * nu) / ((1 + nu) * (1 - 2 * nu)), muPa: e / (2 * (1 + nu)) };
}

/** The material with the defaults filled in, checked; throws FemInputError if out of range. */
export function resolveMaterial(material: Partial<TissueMaterial> = {}): TissueMaterial {
  const resolved: TissueMaterial = { ...LIVER_MATERIAL, ...material };
  const check = (ok: boolean, message: string): void => {
    if (!ok) throw new FemInputError(message);
  };
  check(
    Number.isFinite(resolved.youngsModulusPa) && resolved.youngsModulusPa > 0,
    `Young's modulus must be a positive number of pascals (got ${resolved.youngsModulusPa}).`,
  );
  check(
    Number.isFinite(resolved.poissonRatio) &&
      resolved.poissonRatio > -1 &&
      resolved.poissonRatio < 0.5,
    `Poisson's ratio must lie strictly between −1 and 0.5 (got ${resolved.poissonRatio}); ` +
      'at 0.5 the linear material is incompressible and linear tetrahedra lock.',
  );
  check(
    Number.isFinite(resolved.densityKgPerM3) && resolved.densityKgPerM3 > 0,
    `Density must be a positive number of kg/m³ (got ${resolved.densityKgPerM3}).`,
  );
  check(
    Number.isFinite(resolved.massDampingPerS) && resolved.massDampingPerS >= 0,
    `Rayleigh α must be a non-negative number of 1/s (got ${resolved.massDampingPerS}).`,
  );
  check(
    Number.isFinite(resolved.stiffnessDampingS) && resolved.stiffnessDampingS >= 0,
    `Rayleigh β must be a non-negative number of seconds (got ${resolved.stiffnessDampingS}).`,
  );
  return resolved;
}
