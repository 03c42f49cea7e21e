import { describe, expect, it } from 'vitest';
import type { GridDimensions } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import { stableTimeStepS } from './bioheat-grid';
import { BioheatAbortedError, solvePennesTransient } from './pennes-solver';
import { solvePennesSteadyState } from './pennes-steady-state';
import { arrheniusDamageIncrement, arrheniusRatePerS } from './thermal-damage';
import { LIVER_TISSUE, thermalDiffusivityM2PerS } from './tissue-properties';

const PENNES = 'Pennes, J Appl Physiol 1948;1:93';
const ARTERIAL_C = LIVER_TISSUE.arterialTemperatureC;
const NO_PERFUSION = { ...LIVER_TISSUE, perfusionPerS: 0 };

/** mulberry32 (common practice): numbers in [0, 1). */
function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * The decaying sine mode of the Pennes equation without a source (separation of variables,
 * e.g. Carslaw & Jaeger, Conduction of Heat in Solids, §6.3): with T = Ta on the walls of a box
 * Lx × Ly × Lz, T − Ta = A·Π sin(πx/L)·exp(−(απ²Σ1/L² + ω_b ρ_b c_b/(ρc))·t). On the grid the
 * walls lie one spacing beyond the last voxel centres, so L = (n + 1)·h along each axis.
 * Answers the largest error at time t over the grid, relative to A.
 */
function sineModeError(unitsPerAxis: number, baseSpacingMm: number, timeS: number): number {
  const spacingMm: Vec3 = [baseSpacingMm, 0.75 * baseSpacingMm, 1.25 * baseSpacingMm];
  const n = unitsPerAxis - 1;
  const dimensions: GridDimensions = [n, n, n];
  const lengthsM = spacingMm.map((h) => (unitsPerAxis * h) / 1000);
  const amplitudeK = 10;
  const mode = (i: number, j: number, k: number) =>
    Math.sin((Math.PI * (i + 1)) / unitsPerAxis) *
    Math.sin((Math.PI * (j + 1)) / unitsPerAxis) *
    Math.sin((Math.PI * (k + 1)) / unitsPerAxis);
  const initialTemperatureC = new Float64Array(n ** 3);
  forEachVoxel(dimensions, (i, j, k, index) => {
    initialTemperatureC[index] = ARTERIAL_C + amplitudeK * mode(i, j, k);
  });
  const result = solvePennesTransient({
    grid: { dimensions, spacingMm },
    initialTemperatureC,
    phases: [{ durationS: timeS }],
  });
  const heatCapacity = LIVER_TISSUE.densityKgPerM3 * LIVER_TISSUE.specificHeatJPerKgK;
  const decayPerS =
    thermalDiffusivityM2PerS(LIVER_TISSUE) *
      Math.PI ** 2 *
      lengthsM.reduce((sum, length) => sum + 1 / length ** 2, 0) +
    (LIVER_TISSUE.perfusionPerS * LIVER_TISSUE.bloodHeatCapacityJPerM3K) / heatCapacity;
  let worst = 0;
  forEachVoxel(dimensions, (i, j, k, index) => {
    const exact = amplitudeK * mode(i, j, k) * Math.exp(-decayPerS * timeS);
    worst = Math.max(worst, Math.abs(result.temperatureC[index] - ARTERIAL_C - exact));
  });
  return worst / amplitudeK;
}

function forEachVoxel(
  [nx, ny, nz]: GridDimensions,
  visit: (i: number, j: number, k: number, index: number) => void,
): void {
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) visit(i, j, k, i + nx * (j + ny * k));
    }
  }
}

describe(`Pennes equation in time (${PENNES}), against analytic solutions`, () => {
  it('follows the decaying sine mode on an anisotropic grid, converging at second order', () => {
    // Boxes of 24 × 18 × 30 mm at spacings (1, 0.75, 1.25)·h for h = 2, 1, 0.5 mm, 60 s.
    const errors = [12, 24, 48].map((units) => sineModeError(units, 24 / units, 60));
    expect(errors[0]).toBeGreaterThan(errors[1]);
    expect(errors[1]).toBeGreaterThan(errors[2]);
    // Space errs as h² (the stencil), time as Δt ∝ h² (forward Euler): order 2 in h.
    for (const [coarse, fine] of [
      [errors[0], errors[1]],
      [errors[1], errors[2]],
    ]) {
      const observedOrder = Math.log2(coarse / fine);
      expect(observedOrder).toBeGreaterThan(1.8);
      expect(observedOrder).toBeLessThan(2.2);
    }
    expect(errors[2]).toBeLessThan(0.005);
  });

  it('conserves energy with insulated walls and no perfusion: Σ ρc ΔT V = Σ Q V t', () => {
    const dimensions: GridDimensions = [9, 7, 11];
    const spacingMm: Vec3 = [1.5, 2, 1.2];
    const count = 9 * 7 * 11;
    const random = seededRandom(7);
    const heating = Float64Array.from({ length: count }, () => 2e6 * random());
    const second = Float64Array.from({ length: count }, () => (random() < 0.2 ? 5e6 : 0));
    const phases = [
      { durationS: 40, powerDensityWPerM3: heating },
      { durationS: 25 },
      { durationS: 33.3, powerDensityWPerM3: second },
    ];
    const result = solvePennesTransient({
      grid: { dimensions, spacingMm },
      tissue: NO_PERFUSION,
      walls: 'insulated',
      phases,
    });
    const voxelVolumeM3 = (spacingMm[0] * spacingMm[1] * spacingMm[2]) / 1e9;
    const heatCapacity = LIVER_TISSUE.densityKgPerM3 * LIVER_TISSUE.specificHeatJPerKgK;
    let storedJ = 0;
    for (const temperatureC of result.temperatureC) {
      storedJ += heatCapacity * (temperatureC - ARTERIAL_C) * voxelVolumeM3;
    }
    let suppliedJ = 0;
    for (const phase of phases) {
      for (const q of phase.powerDensityWPerM3 ?? [])
        suppliedJ += q * voxelVolumeM3 * phase.durationS;
    }
    expect(Math.abs(storedJ / suppliedJ - 1)).toBeLessThan(1e-12);
  });

  it('approaches the steady-state solver after many perfusion time constants', () => {
    const grid = { dimensions: [13, 13, 13] as GridDimensions, spacingMm: [2, 2, 2] as Vec3 };
    const source = new Float64Array(13 ** 3);
    source[6 + 13 * (6 + 13 * 6)] = 2e8;
    source[7 + 13 * (6 + 13 * 6)] = 1e8;
    // Perfusion alone removes a rise at ω_b ρ_b c_b/(ρc) = 0.0070 /s: 1500 s is 10 time constants.
    const transient = solvePennesTransient({
      grid,
      phases: [{ durationS: 1500, powerDensityWPerM3: source }],
    });
    const steady = solvePennesSteadyState({ grid, powerDensityWPerM3: source });
    let worst = 0;
    let peak = 0;
    steady.temperatureC.forEach((temperatureC, index) => {
      worst = Math.max(worst, Math.abs(transient.temperatureC[index] - temperatureC));
      peak = Math.max(peak, temperatureC - ARTERIAL_C);
    });
    expect(worst / peak).toBeLessThan(1e-3);
  });
});

describe('time step and the discrete maximum principle', () => {
  it('picks the bound 1/(2αΣ1/h² + f·ω_b ρ_b c_b/(ρc)) and never leaves the initial range', () => {
    const grid = { dimensions: [11, 11, 11] as GridDimensions, spacingMm: [1, 1.5, 0.8] as Vec3 };
    const perfusionFactor = new Float32Array(11 ** 3).fill(1);
    perfusionFactor.fill(3, 0, 300);
    const initialTemperatureC = new Float64Array(11 ** 3).fill(ARTERIAL_C);
    initialTemperatureC[5 + 11 * (5 + 11 * 5)] = 90;
    const result = solvePennesTransient({
      grid,
      perfusionFactor,
      initialTemperatureC,
      phases: [{ durationS: 30 }],
      walls: 'insulated',
    });
    const alpha = thermalDiffusivityM2PerS(LIVER_TISSUE);
    const perfusionRate =
      (3 * LIVER_TISSUE.perfusionPerS * LIVER_TISSUE.bloodHeatCapacityJPerM3K) /
      (LIVER_TISSUE.densityKgPerM3 * LIVER_TISSUE.specificHeatJPerKgK);
    const boundS = 1 / (2 * alpha * (1 / 1e-6 + 1 / 2.25e-6 + 1 / 0.64e-6) + perfusionRate);
    expect(stableTimeStepS(grid, LIVER_TISSUE, 3)).toBeCloseTo(boundS, 12);
    expect(result.timeStepS).toBeLessThanOrEqual(boundS);
    expect(result.timeStepS).toBeGreaterThan(0.9 * boundS);
    for (const temperatureC of result.temperatureC) {
      expect(temperatureC).toBeGreaterThanOrEqual(ARTERIAL_C);
      expect(temperatureC).toBeLessThanOrEqual(90);
    }
  });
});

describe('damage accumulated by the solver', () => {
  function uniformRun(
    temperatureC: number,
    durationS: number,
    reference: 'absolute' | 'above-arterial',
  ) {
    return solvePennesTransient({
      grid: { dimensions: [3, 3, 3], spacingMm: [2, 2, 2] },
      tissue: NO_PERFUSION,
      walls: 'insulated',
      arrheniusReference: reference,
      initialTemperatureC: new Float64Array(27).fill(temperatureC),
      phases: [{ durationS }],
    });
  }

  it('gives Ω = 17.4 for 60 s at 60 °C (Henriques & Moritz 1947 formula [C])', () => {
    const result = uniformRun(60, 60, 'absolute');
    expect(result.omega[13]).toBeCloseTo(17.4, 1);
    expect(result.omega[13] / arrheniusDamageIncrement(60, 60)).toBeCloseTo(1, 4);
  });

  it('takes the body-temperature rate off when counting above arterial', () => {
    const result = uniformRun(60, 60, 'above-arterial');
    const expected = (arrheniusRatePerS(60) - arrheniusRatePerS(ARTERIAL_C)) * 60;
    expect(result.omega[13] / expected).toBeCloseTo(1, 4);
    expect(uniformRun(ARTERIAL_C, 600, 'above-arterial').omega[13]).toBe(0);
  });

  it('gives CEM43 = 1280 min for 10 min at 50 °C (Sapareto & Dewey 1984 formula [C])', () => {
    expect(uniformRun(50, 600, 'absolute').cem43Minutes[13] / 1280).toBeCloseTo(1, 4);
  });

  it('records the peak temperature and keeps clamped voxels at body temperature', () => {
    const source = new Float64Array(125);
    source[62] = 5e7;
    const clampedMask = new Uint8Array(125);
    clampedMask[63] = 1;
    const result = solvePennesTransient({
      grid: { dimensions: [5, 5, 5], spacingMm: [2, 2, 2] },
      clampedMask,
      phases: [{ durationS: 60, powerDensityWPerM3: source }, { durationS: 120 }],
    });
    expect(result.temperatureC[63]).toBe(ARTERIAL_C);
    expect(result.peakTemperatureC[63]).toBe(ARTERIAL_C);
    expect(result.peakTemperatureC[62]).toBeGreaterThan(result.temperatureC[62] + 5);
  });

  it('runs hotter when perfusion stops with damage than with constant perfusion', () => {
    const source = new Float64Array(11 ** 3);
    source[5 + 11 * (5 + 11 * 5)] = 3e7;
    const run = (perfusionModel: 'constant' | 'stops-with-damage') =>
      solvePennesTransient({
        grid: { dimensions: [11, 11, 11], spacingMm: [2, 2, 2] },
        perfusionModel,
        phases: [{ durationS: 300, powerDensityWPerM3: source }],
      });
    const constant = run('constant');
    const stopping = run('stops-with-damage');
    const centre = 5 + 11 * (5 + 11 * 5);
    expect(constant.omega[centre]).toBeGreaterThan(1);
    expect(stopping.temperatureC[centre + 2]).toBeGreaterThan(constant.temperatureC[centre + 2]);
  });
});

describe('progress, cancelling and refusals', () => {
  const grid = { dimensions: [6, 6, 6] as GridDimensions, spacingMm: [2, 2, 2] as Vec3 };

  it('reports a rising fraction that ends at 1, at most about a hundred times', () => {
    const fractions: number[] = [];
    solvePennesTransient({
      grid,
      phases: [{ durationS: 900 }],
      onProgress: (f) => fractions.push(f),
    });
    expect(fractions.length).toBeGreaterThan(10);
    expect(fractions.length).toBeLessThanOrEqual(101);
    expect(fractions.at(-1)).toBe(1);
    fractions
      .slice(1)
      .forEach((fraction, index) => expect(fraction).toBeGreaterThan(fractions[index]));
  });

  it('stops with a BioheatAbortedError when asked to', () => {
    let checks = 0;
    const run = () =>
      solvePennesTransient({ grid, phases: [{ durationS: 900 }], shouldAbort: () => ++checks > 3 });
    expect(run).toThrow(BioheatAbortedError);
    try {
      checks = 0;
      run();
    } catch (error) {
      expect(error).toBeInstanceOf(BioheatAbortedError);
      expect((error as BioheatAbortedError).reason).toBe('aborted');
      expect((error as BioheatAbortedError).fractionDone).toBeGreaterThan(0);
    }
  });

  it('stops with reason time-limit once the time limit is reached', () => {
    expect(() =>
      solvePennesTransient({ grid, phases: [{ durationS: 900 }], timeLimitMs: 0 }),
    ).toThrow(/ran out of time/);
  });

  it.each([
    [{ phases: [] }, /at least one heating phase/],
    [{ phases: [{ durationS: -1 }] }, /phases\[0\]\.durationS/],
    [
      { phases: [{ durationS: 1, powerDensityWPerM3: new Float64Array(5) }] },
      /phases\[0\]\.powerDensityWPerM3 has 5 voxels/,
    ],
    [{ phases: [{ durationS: 1 }], clampedMask: new Uint8Array(3) }, /clampedMask has 3 voxels/],
    [
      { phases: [{ durationS: 1 }], perfusionFactor: new Float32Array(216).fill(-1) },
      /perfusionFactor\[0\]/,
    ],
    [
      { phases: [{ durationS: 1 }], initialTemperatureC: new Float64Array(2) },
      /initialTemperatureC has 2/,
    ],
    [
      { phases: [{ durationS: 1 }], grid: { dimensions: [0, 6, 6], spacingMm: [2, 2, 2] } },
      /grid\.dimensions/,
    ],
    [
      { phases: [{ durationS: 1 }], grid: { dimensions: [6, 6, 6], spacingMm: [2, 0, 2] } },
      /grid\.spacingMm/,
    ],
  ] as const)('refuses malformed input, naming the field (%#)', (override, message) => {
    expect(() =>
      solvePennesTransient({ grid, ...override } as Parameters<typeof solvePennesTransient>[0]),
    ).toThrow(message);
  });
});
