import { describe, expect, it } from 'vitest';
import { sampleNearest } from '../assessment/bioheat-zone';
import { voxelToLps, type VolumeGeometry } from '../geometry/patient-geometry';
import { cross, dot, type Vec3 } from '../geometry/vector';
import { DAMAGE_INTERPOLATION_ERROR_MM, resampleDamageMask } from './damage-resampling';
import { arrheniusRatePerS } from './thermal-damage';
import { LIVER_TISSUE, perfusionLengthM } from './tissue-properties';

/*
 * An exact damage field to read from: the steady temperature of a point source of P watts in
 * perfused liver, T = Ta + P/(4πkr)·exp(−r/L) (Nyborg, Phys Med Biol 1988;33:785), held for
 * t seconds, Ω = t·A·exp(−Ea/(R·T)) (Henriques & Moritz 1947, liver coefficients of
 * tissue-properties.ts). Its edge Ω = 1 is a sphere whose radius bisection finds.
 */
const POWER_W = 8;
const HOLD_S = 600;

function omegaAt(radiusMm: number): number {
  const radiusM = Math.max(radiusMm, 1e-3) / 1000;
  const riseK =
    (POWER_W / (4 * Math.PI * LIVER_TISSUE.conductivityWPerMK * radiusM)) *
    Math.exp(-radiusM / perfusionLengthM(LIVER_TISSUE));
  return HOLD_S * arrheniusRatePerS(LIVER_TISSUE.arterialTemperatureC + riseK);
}

function edgeRadiusMm(): number {
  let inner = 1;
  let outer = 40;
  for (let step = 0; step < 60; step++) {
    const middle = (inner + outer) / 2;
    if (omegaAt(middle) >= 1) inner = middle;
    else outer = middle;
  }
  return (inner + outer) / 2;
}

/** Axes turned 20° about (2, 1, 2)/3 (Rodrigues' formula): the crop need not share axes. */
function turnedAxes(): VolumeGeometry['direction'] {
  const axis: Vec3 = [2 / 3, 1 / 3, 2 / 3];
  const angleRad = (20 * Math.PI) / 180;
  const turn = (vector: Vec3): Vec3 => {
    const across = cross(axis, vector);
    const along = dot(axis, vector) * (1 - Math.cos(angleRad));
    return [0, 1, 2].map(
      (index) =>
        vector[index] * Math.cos(angleRad) +
        across[index] * Math.sin(angleRad) +
        axis[index] * along,
    ) as Vec3;
  };
  return [turn([1, 0, 0]), turn([0, 1, 0]), turn([0, 0, 1])];
}

function cube(size: number, spacingMm: number, shiftLps: Vec3, direction = IDENTITY) {
  const halfMm = ((size - 1) * spacingMm) / 2;
  let origin: Vec3 = [...shiftLps];
  for (let axis = 0; axis < 3; axis++) {
    origin = origin.map((value, index) => value - halfMm * direction[axis][index]) as Vec3;
  }
  return {
    dimensions: [size, size, size] as [number, number, number],
    spacingMm: [spacingMm, spacingMm, spacingMm] as Vec3,
    originLps: origin,
    direction,
  };
}

const IDENTITY: VolumeGeometry['direction'] = [
  [1, 0, 0],
  [0, 1, 0],
  [0, 0, 1],
];

/** The 2 mm model grid, its lattice off the source by a fraction of a voxel. */
const model = cube(24, 2, [0.37, -0.61, 0.23]);
const omega = new Float64Array(24 ** 3).map((_, index) => {
  const point = voxelToLps(model, [
    index % 24,
    Math.floor(index / 24) % 24,
    Math.floor(index / 576),
  ]);
  return omegaAt(Math.hypot(...point));
});
/** A 0.5 mm crop on turned axes, as a series crop might lie. */
const crop = cube(72, 0.5, [0.11, 0.2, -0.3], turnedAxes());

/** Farthest a wrongly classified crop voxel lies from the exact edge, millimetres. */
function worstMisplacementMm(mask: Uint8Array): number {
  const edgeMm = edgeRadiusMm();
  let worst = 0;
  mask.forEach((value, index) => {
    const voxel: Vec3 = [index % 72, Math.floor(index / 72) % 72, Math.floor(index / 5184)];
    const radiusMm = Math.hypot(...voxelToLps(crop, voxel));
    if ((value === 1) !== radiusMm < edgeMm) worst = Math.max(worst, Math.abs(radiusMm - edgeMm));
  });
  return worst;
}

describe('damage field read onto a finer, turned crop grid', () => {
  it('has its exact edge about 12 mm out, well inside both grids', () => {
    expect(edgeRadiusMm()).toBeGreaterThan(10);
    expect(edgeRadiusMm()).toBeLessThan(15);
  });

  it(`places the edge within DAMAGE_INTERPOLATION_ERROR_MM (${DAMAGE_INTERPOLATION_ERROR_MM} mm) by ln Ω trilinear`, () => {
    const worst = worstMisplacementMm(resampleDamageMask(omega, model, crop));
    expect(worst).toBeLessThan(DAMAGE_INTERPOLATION_ERROR_MM);
  });

  it('does better than thresholding on the 2 mm grid and reading the nearest voxel', () => {
    const thresholded = Uint8Array.from(omega, (value) => (value >= 1 ? 1 : 0));
    const nearest = worstMisplacementMm(sampleNearest(thresholded, model, crop));
    const interpolated = worstMisplacementMm(resampleDamageMask(omega, model, crop));
    // Nearest voxel misplaces the edge by up to half a voxel diagonal (√3 mm at 2 mm).
    expect(nearest).toBeGreaterThan(0.8);
    expect(interpolated).toBeLessThan(nearest / 3);
  });

  it('counts nothing outside the model grid and nothing without damage', () => {
    const far = cube(10, 1, [100, 0, 0]);
    expect(resampleDamageMask(omega, model, far).some((value) => value !== 0)).toBe(false);
    expect(
      resampleDamageMask(new Float64Array(omega.length), model, crop).some((value) => value !== 0),
    ).toBe(false);
  });

  it('refuses a field of the wrong size', () => {
    expect(() => resampleDamageMask(new Float64Array(5), model, crop)).toThrow(
      /omega has 5 voxels, its grid 13824/,
    );
  });
});
