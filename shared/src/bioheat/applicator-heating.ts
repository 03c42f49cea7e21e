/**
 * The heating model of an ablation applicator: where its absorbed power goes.
 *
 * The power is spread along the heating segment — `activeLengthMm` long, beginning
 * `segmentOffsetMm` behind the tip (0: at the tip) and running towards the entry — with a
 * Gaussian fall-off of the distance d to that segment: Q(x) = C·exp(−d²/(2σ²)), σ = `SOURCE_RADIUS_MM`. The constant C makes the integral
 * over all space equal to the absorbed power η·P:
 *
 *   ∫ exp(−d²/(2σ²)) dV = ℓ·2πσ² + (2π)^{3/2}·σ³   (a cylinder of length ℓ and two half-balls),
 *
 * so the power does not depend on the grid. η, the coupling efficiency, the segment's length and
 * its offset are calibrated per applicator profile against its zone table (`calibration.ts`,
 * `heating-parameters.ts`): they stand for everything the linear model leaves out (reflected
 * power, cable losses, water vapour and charring near the antenna).
 */
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { ORIENTATION_TOLERANCE } from '../geometry/patient-geometry';
import { distance, dot, subtract, type Vec3 } from '../geometry/vector';
import type { HeatingPhase } from './pennes-solver';

/**
 * Radius σ of the Gaussian around the active segment, millimetres. Our modelling choice:
 * wide enough that a crop grid of 1.5–2.5 mm resolves it (the grid then holds η·P within 5e-4;
 * see applicator-heating.spec.ts), narrow against zones 20–50 mm across.
 */
export const SOURCE_RADIUS_MM = 2.5;

/** Beyond this many σ the source is left at 0 (the Gaussian's tail there is below 4e-6). */
const CUTOFF_IN_RADII = 5;

/** One applicator as the zone model sees it. */
export interface ZoneApplicator {
  /** Skin entry point, LPS, millimetres: only the direction from the tip towards it matters. */
  entryLps: Vec3;
  /** Tip, LPS, millimetres. */
  tipLps: Vec3;
  /** Length of the heating segment, millimetres (the calibrated `heatingLengthMm`). */
  activeLengthMm: number;
  /**
   * Where the heating segment begins behind the tip, millimetres (default 0: at the tip;
   * negative: beyond it), the calibrated `segmentOffsetMm`.
   */
  segmentOffsetMm?: number;
  /** Generator power, watts. */
  powerW: number;
  /** How long the power is on, from time 0, seconds. */
  timeS: number;
  /**
   * Coupling efficiency η at this power (no unit): the share of `powerW` absorbed by the
   * tissue, from the profile's calibration (`couplingEfficiencyAt`).
   */
  calibration: number;
}

/** The power density of one applicator on a grid. */
export interface ApplicatorPowerDensity {
  /** Q per voxel, W/m³. */
  powerDensityWPerM3: Float64Array;
  /** η·P, watts. */
  absorbedPowerW: number;
  /** Σ Q·V over the grid, watts: η·P when the grid holds the whole source. */
  depositedPowerW: number;
}

/**
 * Throws a RangeError naming the field when an applicator is malformed: non-finite points,
 * tip and entry closer than 1 mm, a non-positive active length or time, a negative power or a
 * non-positive calibration. `label` names the applicator in the message.
 */
export function checkZoneApplicator(applicator: Readonly<ZoneApplicator>, label: string): void {
  for (const name of ['entryLps', 'tipLps'] as const) {
    const point = applicator[name];
    if (!Array.isArray(point) || point.length !== 3 || !point.every(Number.isFinite)) {
      throw new RangeError(`${label}.${name} must be 3 finite numbers (LPS, mm)`);
    }
  }
  if (!(distance(applicator.entryLps, applicator.tipLps) >= 1)) {
    throw new RangeError(`${label}: tipLps and entryLps must be at least 1 mm apart`);
  }
  const positives = ['activeLengthMm', 'timeS', 'calibration'] as const;
  for (const name of positives) {
    if (!(applicator[name] > 0) || !Number.isFinite(applicator[name])) {
      throw new RangeError(`${label}.${name} must be a positive number, got ${applicator[name]}`);
    }
  }
  if (!(applicator.powerW >= 0) || !Number.isFinite(applicator.powerW)) {
    throw new RangeError(`${label}.powerW must be 0 or more, got ${applicator.powerW}`);
  }
  if (!Number.isFinite(applicator.segmentOffsetMm ?? 0)) {
    throw new RangeError(`${label}.segmentOffsetMm must be a finite number`);
  }
}

/**
 * Throws a RangeError unless the grid's direction cosines are orthonormal (within
 * `ORIENTATION_TOLERANCE`): the seven-point stencil needs perpendicular axes.
 */
export function checkOrthonormalGrid(geometry: Readonly<VolumeGeometry>): void {
  const [x, y, z] = geometry.direction;
  const departure = Math.max(
    Math.abs(dot(x, x) - 1),
    Math.abs(dot(y, y) - 1),
    Math.abs(dot(z, z) - 1),
    Math.abs(dot(x, y)),
    Math.abs(dot(y, z)),
    Math.abs(dot(x, z)),
  );
  if (!(departure <= ORIENTATION_TOLERANCE)) {
    throw new RangeError('geometry.direction must be three perpendicular unit vectors');
  }
}

/**
 * The power density of one applicator on a grid (positions LPS, millimetres; Q in W/m³), its
 * absorbed power η·P and the part of it the grid holds. The grid must be orthonormal.
 */
export function applicatorPowerDensity(
  geometry: Readonly<VolumeGeometry>,
  applicator: Readonly<ZoneApplicator>,
  radiusMm = SOURCE_RADIUS_MM,
): ApplicatorPowerDensity {
  const [nx, ny, nz] = geometry.dimensions;
  const [spacingI, spacingJ, spacingK] = geometry.spacingMm;
  const [directionI, directionJ, directionK] = geometry.direction;
  const shaft = subtract(applicator.entryLps, applicator.tipLps);
  const shaftLength = Math.hypot(...shaft);
  const axis: Vec3 = [shaft[0] / shaftLength, shaft[1] / shaftLength, shaft[2] / shaftLength];
  const lengthMm = applicator.activeLengthMm;
  const startMm = applicator.segmentOffsetMm ?? 0;
  const endMm = startMm + lengthMm;
  const absorbedPowerW = applicator.calibration * applicator.powerW;
  const radiusM = radiusMm / 1000;
  const gaussianVolumeM3 =
    (lengthMm / 1000) * 2 * Math.PI * radiusM ** 2 + (2 * Math.PI) ** 1.5 * radiusM ** 3;
  const peakWPerM3 = absorbedPowerW / gaussianVolumeM3;
  const inverseTwoSigmaSquared = 1 / (2 * radiusMm ** 2);
  const cutoffSquaredMm2 = (CUTOFF_IN_RADII * radiusMm) ** 2;

  const powerDensityWPerM3 = new Float64Array(nx * ny * nz);
  let sumWPerM3 = 0;
  const tip = applicator.tipLps;
  const origin = subtract(geometry.originLps, tip);
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      // Voxel centre relative to the tip, LPS mm, at i = 0 of this row.
      const rowX = origin[0] + directionJ[0] * spacingJ * j + directionK[0] * spacingK * k;
      const rowY = origin[1] + directionJ[1] * spacingJ * j + directionK[1] * spacingK * k;
      const rowZ = origin[2] + directionJ[2] * spacingJ * j + directionK[2] * spacingK * k;
      for (let i = 0; i < nx; i++) {
        const x = rowX + directionI[0] * spacingI * i;
        const y = rowY + directionI[1] * spacingI * i;
        const z = rowZ + directionI[2] * spacingI * i;
        const along = x * axis[0] + y * axis[1] + z * axis[2];
        const nearest = along < startMm ? startMm : along > endMm ? endMm : along;
        const dx = x - nearest * axis[0];
        const dy = y - nearest * axis[1];
        const dz = z - nearest * axis[2];
        const squaredMm2 = dx * dx + dy * dy + dz * dz;
        if (squaredMm2 > cutoffSquaredMm2) continue;
        const value = peakWPerM3 * Math.exp(-squaredMm2 * inverseTwoSigmaSquared);
        powerDensityWPerM3[i + nx * (j + ny * k)] = value;
        sumWPerM3 += value;
      }
    }
  }
  const voxelVolumeM3 = (spacingI * spacingJ * spacingK) / 1e9;
  return { powerDensityWPerM3, absorbedPowerW, depositedPowerW: sumWPerM3 * voxelVolumeM3 };
}

/**
 * Share of the absorbed power a grid must hold: less means the crop grid cuts through a
 * heating segment, and the zone would be wrong.
 */
export const MIN_DEPOSITED_SHARE = 0.99;

/**
 * The heating phases of applicators that start together at time 0 and each stop after its
 * own `timeS`: phase p runs from the p-th shortest time to the next, with the sum of the
 * sources still on. Positions LPS, millimetres. Throws a RangeError when an applicator is
 * malformed or the grid holds less than `MIN_DEPOSITED_SHARE` of its power.
 */
export function applicatorHeatingPhases(
  geometry: Readonly<VolumeGeometry>,
  applicators: readonly Readonly<ZoneApplicator>[],
): HeatingPhase[] {
  if (!Array.isArray(applicators) || applicators.length === 0) {
    throw new RangeError('applicators must hold at least one applicator');
  }
  checkOrthonormalGrid(geometry);
  const densities = applicators.map((applicator, index) => {
    checkZoneApplicator(applicator, `applicators[${index}]`);
    const density = applicatorPowerDensity(geometry, applicator);
    if (density.depositedPowerW < MIN_DEPOSITED_SHARE * density.absorbedPowerW) {
      throw new RangeError(
        `applicators[${index}]: the grid holds ${density.depositedPowerW.toFixed(2)} W of its ` +
          `${density.absorbedPowerW.toFixed(2)} W; the crop grid must contain the whole ` +
          'heating segment with a margin',
      );
    }
    return density.powerDensityWPerM3;
  });
  const endTimesS = [...new Set(applicators.map((applicator) => applicator.timeS))].sort(
    (a, b) => a - b,
  );
  const phases: HeatingPhase[] = [];
  let startS = 0;
  for (const endS of endTimesS) {
    const total = new Float64Array(densities[0].length);
    applicators.forEach((applicator, index) => {
      if (applicator.timeS < endS) return;
      const density = densities[index];
      for (let voxel = 0; voxel < total.length; voxel++) total[voxel] += density[voxel];
    });
    phases.push({ durationS: endS - startS, powerDensityWPerM3: total });
    startS = endS;
  }
  return phases;
}
