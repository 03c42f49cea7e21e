import { describe, expect, it } from 'vitest';
import type { WallConditions } from './bioheat-grid';
import { solvePennesSteadyState } from './pennes-steady-state';
import { LIVER_TISSUE, perfusionLengthM } from './tissue-properties';

const NYBORG = 'Nyborg WL, Phys Med Biol 1988;33:785';

/** Steady rise of a point source P (W) at r (m) in infinite perfused tissue (Nyborg 1988). */
function nyborgRiseK(
  powerW: number,
  radiusM: number,
  perfusionLength = perfusionLengthM(LIVER_TISSUE),
): number {
  return (
    (powerW / (4 * Math.PI * LIVER_TISSUE.conductivityWPerMK * radiusM)) *
    Math.exp(-radiusM / perfusionLength)
  );
}

/** The octant x, y, z > 0 of a grid centred on the source: mirror planes through voxel faces. */
const OCTANT_WALLS: WallConditions = {
  iLow: 'insulated',
  jLow: 'insulated',
  kLow: 'insulated',
  iHigh: 'body-temperature',
  jHigh: 'body-temperature',
  kHigh: 'body-temperature',
};

/** Worst errors already computed, by spacing (mm): the 0.5 mm grid serves two tests. */
const worstErrors = new Map<number, number>();

/**
 * Steady rise of 1 W on an octant grid of spacing h (mm) reaching 25 mm from the source: the
 * source is the 2h-wide cube at the origin (P/8 in the corner voxel, mirrored). Answers the
 * largest relative error against Nyborg's formula over voxel centres 4.5–10.5 mm away.
 */
function worstRelativeError(spacingMm: number): number {
  const known = worstErrors.get(spacingMm);
  if (known !== undefined) return known;
  const n = Math.round(25 / spacingMm);
  const voxelVolumeM3 = (spacingMm / 1000) ** 3;
  const source = new Float64Array(n ** 3);
  source[0] = 1 / 8 / voxelVolumeM3;
  const { temperatureC } = solvePennesSteadyState({
    grid: { dimensions: [n, n, n], spacingMm: [spacingMm, spacingMm, spacingMm] },
    walls: OCTANT_WALLS,
    powerDensityWPerM3: source,
  });
  let worst = 0;
  for (let k = 0; k < n; k++) {
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        const radiusMm = spacingMm * Math.hypot(i + 0.5, j + 0.5, k + 0.5);
        if (radiusMm < 4.5 || radiusMm > 10.5) continue;
        const riseK = temperatureC[i + n * (j + n * k)] - LIVER_TISSUE.arterialTemperatureC;
        worst = Math.max(worst, Math.abs(riseK / nyborgRiseK(1, radiusMm / 1000) - 1));
      }
    }
  }
  worstErrors.set(spacingMm, worst);
  return worst;
}

describe(`steady point source in perfused liver (${NYBORG})`, () => {
  it('reproduces worked values computed by hand from the formula [C]', () => {
    // The formula the solver is checked against, pinned to values worked by hand from it.
    expect(perfusionLengthM(LIVER_TISSUE) * 1000).toBeCloseTo(4.409, 3);
    expect(nyborgRiseK(1, 0.005)).toBeCloseTo(9.85, 2);
    expect(nyborgRiseK(1, 0.01)).toBeCloseTo(1.58, 2);
    expect(nyborgRiseK(10, 0.01)).toBeCloseTo(15.84, 2);
    expect(nyborgRiseK(1, 0.005, Infinity)).toBeCloseTo(30.61, 2);
  });

  /*
   * Tolerance at h = 0.5 mm, from the discretisation: the seven-point stencil's truncation
   * error (h²/12)·Σ∂⁴T/∂x⁴ is of relative size ~(h/r)² near a 1/r field, 1 % at r = 10h; the
   * cube source of side a = 2h differs from a point by ~a²/(24L²) = 0.2 % in perfused tissue;
   * walls at 37 °C 15 mm beyond the shell act like image sources and take < 0.1 %. 2 % in all.
   */
  it('matches T = Ta + P/(4πkr)·exp(−r/L) within 2 % from 4.5 to 10.5 mm at h = 0.5 mm', () => {
    expect(worstRelativeError(0.5)).toBeLessThan(0.02);
  });

  it('converges at second order as the grid is refined from 1 mm to 0.5 mm', () => {
    const coarse = worstRelativeError(1);
    const fine = worstRelativeError(0.5);
    const observedOrder = Math.log2(coarse / fine);
    expect(fine).toBeLessThan(coarse);
    // The stencil and the source size both err as h²: the observed order should be near 2.
    expect(observedOrder).toBeGreaterThan(1.6);
    expect(observedOrder).toBeLessThan(2.4);
  });

  it('scales linearly with the power (superposition in the linear equation)', () => {
    const grid = {
      dimensions: [9, 9, 9] as [number, number, number],
      spacingMm: [2, 2, 2] as [number, number, number],
    };
    const source = new Float64Array(729);
    source[364] = 1e6;
    const once = solvePennesSteadyState({ grid, powerDensityWPerM3: source });
    const tenfold = solvePennesSteadyState({ grid, powerDensityWPerM3: source.map((q) => 10 * q) });
    const arterialC = LIVER_TISSUE.arterialTemperatureC;
    for (const index of [0, 100, 364, 500]) {
      expect(tenfold.temperatureC[index] - arterialC).toBeCloseTo(
        10 * (once.temperatureC[index] - arterialC),
        8,
      );
    }
  });
});

/*
 * A point source of q watts at distance d from a plane held at blood temperature — a large
 * vessel's wall as the model treats it. The steady Pennes equation for the rise θ = T − Ta is
 * the modified Helmholtz equation ∇²θ − m²θ = −q·δ/k with m² = ω_b·ρ_b·c_b/k (Pennes, J Appl
 * Physiol 1948;1:93). Its free-space Green's function is e^(−mr)/(4πkr), and a plane where
 * θ = 0 is met by an image source of −q mirrored in the plane (method of images; Carslaw &
 * Jaeger, Conduction of Heat in Solids, 2nd ed. 1959, for the plane held at zero):
 *
 *   θ = q/(4πk)·(e^(−m·r1)/r1 − e^(−m·r2)/r2),  r1 to the source, r2 to its image.
 *
 * The solver holds a layer of voxels at blood temperature (`clampedMask`, as it does with
 * vessels); their centres are the plane. The domain is the quarter y, z > 0 (mirror planes
 * through voxel faces), the source the 2h cube astride them, as in the test above.
 */
describe('steady point source beside a plane at blood temperature (method of images)', () => {
  const h = 0.5;
  /** Source 6.25 mm from the plane: between voxel columns 12 and 13 (centres at x = i·h). */
  const sourceColumn = 13;
  const distanceMm = (sourceColumn - 0.5) * h;
  const [nx, ny, nz] = [sourceColumn + Math.round(25 / h), Math.round(25 / h), Math.round(25 / h)];
  const conductivity = LIVER_TISSUE.conductivityWPerMK;
  const m = 1 / perfusionLengthM(LIVER_TISSUE);
  const exactRiseK = (x: number, y: number, z: number) => {
    const r1 = Math.hypot(x - distanceMm, y, z) / 1000;
    const r2 = Math.hypot(x + distanceMm, y, z) / 1000;
    return (1 / (4 * Math.PI * conductivity)) * (Math.exp(-m * r1) / r1 - Math.exp(-m * r2) / r2);
  };
  const freeRiseK = (x: number, y: number, z: number) => {
    const r1 = Math.hypot(x - distanceMm, y, z) / 1000;
    return Math.exp(-m * r1) / (4 * Math.PI * conductivity * r1);
  };

  const source = new Float64Array(nx * ny * nz);
  const clampedMask = new Uint8Array(nx * ny * nz);
  const voxelVolumeM3 = (h / 1000) ** 3;
  source[sourceColumn - 1] = 1 / 8 / voxelVolumeM3;
  source[sourceColumn] = 1 / 8 / voxelVolumeM3;
  for (let k = 0; k < nz; k++) for (let j = 0; j < ny; j++) clampedMask[nx * (j + ny * k)] = 1;
  const { temperatureC } = solvePennesSteadyState({
    grid: { dimensions: [nx, ny, nz], spacingMm: [h, h, h] },
    walls: { ...OCTANT_WALLS, iLow: 'body-temperature' },
    clampedMask,
    powerDensityWPerM3: source,
  });
  /** Each voxel centre 4.5–10.5 mm from the source (as above) and 1 mm or more off the plane. */
  const compared: { x: number; y: number; z: number; riseK: number }[] = [];
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 2; i < nx; i++) {
        const [x, y, z] = [i * h, (j + 0.5) * h, (k + 0.5) * h];
        const fromSourceMm = Math.hypot(x - distanceMm, y, z);
        if (fromSourceMm < 4.5 || fromSourceMm > 10.5) continue;
        const riseK = temperatureC[i + nx * (j + ny * k)] - LIVER_TISSUE.arterialTemperatureC;
        compared.push({ x, y, z, riseK });
      }
    }
  }

  it('matches θ = q/(4πk)·(e^(−m r1)/r1 − e^(−m r2)/r2) within 2 % from 4.5 to 10.5 mm', () => {
    expect(compared.length).toBeGreaterThan(1000);
    let worst = 0;
    for (const point of compared) {
      worst = Math.max(worst, Math.abs(point.riseK / exactRiseK(point.x, point.y, point.z) - 1));
    }
    expect(worst).toBeLessThan(0.02);
  });

  it('is the coolest on the plane’s side: the plane takes heat the free source would keep', () => {
    // Beside the line through source and image, 4.75 mm towards the plane and away from it.
    const near = compared.filter((point) => Math.abs(point.x - (distanceMm - 4.75)) < h / 4);
    const far = compared.filter((point) => Math.abs(point.x - (distanceMm + 4.75)) < h / 4);
    const onAxis = (points: typeof compared) =>
      points.reduce((best, point) => (point.y + point.z < best.y + best.z ? point : best));
    const [towards, away] = [onAxis(near), onAxis(far)];
    const exactRatio =
      exactRiseK(towards.x, towards.y, towards.z) / exactRiseK(away.x, away.y, away.z);
    // About 0.7 by the formula: the solver's asymmetry is the plane's, not its own.
    expect(exactRatio).toBeLessThan(0.75);
    expect(Math.abs(towards.riseK / away.riseK / exactRatio - 1)).toBeLessThan(0.02);
    expect(towards.riseK).toBeLessThan(0.8 * freeRiseK(towards.x, towards.y, towards.z));
  });
});

describe('steady state: heat sinks and refusals', () => {
  it('holds clamped voxels at the arterial temperature and cools their neighbours', () => {
    const grid = {
      dimensions: [15, 15, 15] as [number, number, number],
      spacingMm: [1, 1, 1] as [number, number, number],
    };
    const source = new Float64Array(15 ** 3);
    const centre = 7 + 15 * (7 + 15 * 7);
    source[centre] = 1e9;
    const clampedMask = new Uint8Array(15 ** 3);
    clampedMask[centre + 3] = 1;
    const free = solvePennesSteadyState({ grid, powerDensityWPerM3: source });
    const sunk = solvePennesSteadyState({ grid, powerDensityWPerM3: source, clampedMask });
    expect(sunk.temperatureC[centre + 3]).toBe(LIVER_TISSUE.arterialTemperatureC);
    expect(sunk.temperatureC[centre + 2]).toBeLessThan(free.temperatureC[centre + 2]);
    // Symmetric in the free case; the clamp breaks the symmetry on its side only.
    expect(free.temperatureC[centre + 2]).toBeCloseTo(free.temperatureC[centre - 2], 9);
    expect(sunk.temperatureC[centre + 2]).toBeLessThan(sunk.temperatureC[centre - 2]);
  });

  it('refuses a problem with no steady state (no perfusion, insulated, nothing clamped)', () => {
    expect(() =>
      solvePennesSteadyState({
        grid: { dimensions: [4, 4, 4], spacingMm: [1, 1, 1] },
        tissue: { ...LIVER_TISSUE, perfusionPerS: 0 },
        walls: 'insulated',
        powerDensityWPerM3: new Float64Array(64).fill(1),
      }),
    ).toThrow(/steady state does not exist/);
  });

  it('refuses a source of the wrong size, naming the field', () => {
    expect(() =>
      solvePennesSteadyState({
        grid: { dimensions: [4, 4, 4], spacingMm: [1, 1, 1] },
        powerDensityWPerM3: new Float64Array(10),
      }),
    ).toThrow(/powerDensityWPerM3 has 10 voxels, the grid 64/);
  });
});
