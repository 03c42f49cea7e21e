/**
 * Time-dependent Pennes bioheat equation (Pennes, J Appl Physiol 1948;1:93) on a regular voxel
 * grid, with the thermal damage it causes:
 *
 *   ρc ∂T/∂t = ∇·(k∇T) − ω_b ρ_b c_b (T − T_a) + Q,
 *
 * SI units (T in °C, Q in W/m³, times in seconds). Explicit finite volumes: the seven-point
 * stencil in space (second order, anisotropic spacing), forward Euler in time at a step no
 * larger than `stableTimeStepS` (first order in Δt, and Δt ∝ h², so second order in h overall).
 * Ω (Arrhenius) and CEM43 integrate each voxel's temperature by the trapezoidal rule.
 */
import {
  resolveMedium,
  stableTimeStepS,
  type BioheatMedium,
  type ResolvedMedium,
} from './bioheat-grid';
import { DamageRateTable } from './damage-rate-table';
import { PennesKernel } from './pennes-kernel';
import { LIVER_ARRHENIUS, type ArrheniusCoefficients } from './tissue-properties';

/** A stretch of time during which the heat source is constant. */
export interface HeatingPhase {
  /** Length of the phase, seconds (0 skips it). */
  durationS: number;
  /** Absorbed power density Q per voxel, W/m³; omitted or null: no heating (cooling down). */
  powerDensityWPerM3?: Float32Array | Float64Array | null;
}

/**
 * How perfusion responds to heating:
 * - `constant`: ω_b·f everywhere, always (the linear Pennes equation);
 * - `stops-with-damage`: ω_b·f·exp(−Ω), perfusion falling with the surviving fraction, so that
 *   coagulated tissue no longer cools (a damage-dependent perfusion model of the kind compared
 *   by Schutt & Haemmerich, Med Phys 2008;35:3462 — from memory).
 */
export type PerfusionModel = 'constant' | 'stops-with-damage';

/**
 * Where Ω starts counting:
 * - `absolute`: Ω = ∫ A·exp(−Ea/(R·T)) dt, the plain integral (with the liver coefficients it
 *   reaches 1 after about 57 minutes at 37 °C);
 * - `above-arterial`: only the rate in excess of that at the arterial temperature (never
 *   negative), so that tissue kept at body temperature accrues no damage. Our choice: living
 *   tissue at body temperature is in equilibrium, and it changes times at 50 °C by 2 %.
 */
export type ArrheniusReference = 'absolute' | 'above-arterial';

/** A Pennes problem in time: the medium, the heating phases one after another, and controls. */
export interface PennesTransientProblem extends BioheatMedium {
  phases: readonly HeatingPhase[];
  /** Damage coefficients (default liver, `LIVER_ARRHENIUS`). */
  arrhenius?: Readonly<ArrheniusCoefficients>;
  /** Default `constant`. */
  perfusionModel?: PerfusionModel;
  /** Default `above-arterial`. */
  arrheniusReference?: ArrheniusReference;
  /** Starting temperature per voxel, °C (default: the arterial temperature everywhere). */
  initialTemperatureC?: Float32Array | Float64Array;
  /** Cap on the time step, seconds (the stable bound is always respected). */
  maxTimeStepS?: number;
  /** Called with the fraction of steps done, 0–1, at most about 100 times, and at the end. */
  onProgress?: (fraction: number) => void;
  /** Checked before every step; answering true stops the run with a `BioheatAbortedError`. */
  shouldAbort?: () => boolean;
  /**
   * Wall-clock limit of the run, milliseconds: once reached, the run stops with a
   * `BioheatAbortedError` (0 stops it before the first step).
   */
  timeLimitMs?: number;
  /**
   * Called at the end of every phase with the fields so far (views of the solver's own
   * arrays: read or copy them, never keep or change them).
   */
  onPhaseEnd?: (phaseIndex: number, fields: Readonly<PennesPhaseFields>) => void;
}

/** The fields at the end of a phase. */
export interface PennesPhaseFields {
  /** Time since the start, seconds. */
  elapsedS: number;
  /** Temperature rise above the arterial temperature, kelvin. */
  riseK: Float64Array;
  omega: Float64Array;
  cem43Minutes: Float64Array;
  peakTemperatureC: Float64Array;
}

/** Fields at the end of a run, one value per voxel. */
export interface PennesTransientResult {
  /** Temperature at the end, °C. */
  temperatureC: Float64Array;
  /** Highest temperature reached, °C. */
  peakTemperatureC: Float64Array;
  /** Arrhenius damage integral Ω, no unit (Ω ≥ 1: coagulated). */
  omega: Float64Array;
  /** CEM43 thermal dose, equivalent minutes at 43 °C. */
  cem43Minutes: Float64Array;
  /** Number of time steps taken. */
  stepCount: number;
  /** Largest time step used, seconds (each phase is cut into equal steps). */
  timeStepS: number;
  /** Sum of the phase durations, seconds. */
  simulatedTimeS: number;
}

/** Why a run stopped early. */
export class BioheatAbortedError extends Error {
  override readonly name = 'BioheatAbortedError';

  constructor(
    readonly reason: 'aborted' | 'time-limit',
    /** Fraction of the steps done, 0–1. */
    readonly fractionDone: number,
  ) {
    super(
      reason === 'aborted'
        ? 'The bioheat simulation was cancelled.'
        : `The bioheat simulation ran out of time after ${Math.round(fractionDone * 100)} % of it.`,
    );
  }
}

/**
 * Runs the Pennes equation through the phases in order and accumulates Ω, CEM43 and the peak
 * temperature per voxel. Each phase is cut into ⌈duration / Δt_max⌉ equal steps, Δt_max the
 * smaller of `stableTimeStepS` and `maxTimeStepS`. Clamped voxels stay at the arterial
 * temperature; walls follow `walls`. Allocates its fields once; nothing per step.
 *
 * Throws a RangeError for malformed input (naming the field) and a `BioheatAbortedError` when
 * `shouldAbort` answers true or `timeLimitMs` passes.
 */
export function solvePennesTransient(
  problem: Readonly<PennesTransientProblem>,
): PennesTransientResult {
  const medium = resolveMedium(problem);
  const { voxelCount } = medium;
  const phases = checkPhases(problem.phases, voxelCount);
  const boundS = stableTimeStepS(problem.grid, medium.tissue, medium.maxPerfusionFactor);
  const capS = problem.maxTimeStepS ?? Infinity;
  if (!(capS > 0)) throw new RangeError(`maxTimeStepS must be positive, got ${capS}`);
  const maxStepS = Math.min(boundS, capS);
  const stepCounts = phases.map((phase) => Math.ceil(phase.durationS / maxStepS - 1e-9));
  const totalSteps = stepCounts.reduce((sum, count) => sum + count, 0);

  const kernel = new PennesKernel(
    medium,
    damageRateTable(problem, medium.tissue.arterialTemperatureC),
    perfusionStopsWithDamage(problem.perfusionModel ?? 'constant'),
    initialRise(medium, problem.initialTemperatureC),
  );

  const startedAtMs = Date.now();
  const timeLimitMs = problem.timeLimitMs ?? Infinity;
  let stepsDone = 0;
  let lastReportedPercent = -1;
  let largestStepS = 0;
  let elapsedS = 0;
  for (let phaseIndex = 0; phaseIndex < phases.length; phaseIndex++) {
    const phase = phases[phaseIndex];
    const steps = stepCounts[phaseIndex];
    elapsedS += phase.durationS;
    const stepS = steps === 0 ? 0 : phase.durationS / steps;
    largestStepS = Math.max(largestStepS, stepS);
    kernel.setPhase(stepS, phase.powerDensityWPerM3 ?? null);
    for (let step = 0; step < steps; step++) {
      if (problem.shouldAbort?.() === true) {
        throw new BioheatAbortedError('aborted', stepsDone / totalSteps);
      }
      if (Date.now() - startedAtMs >= timeLimitMs) {
        throw new BioheatAbortedError('time-limit', stepsDone / totalSteps);
      }
      kernel.step();
      stepsDone++;
      const percent = Math.floor((100 * stepsDone) / totalSteps);
      if (problem.onProgress !== undefined && percent !== lastReportedPercent) {
        lastReportedPercent = percent;
        problem.onProgress(stepsDone / totalSteps);
      }
    }
    problem.onPhaseEnd?.(phaseIndex, {
      elapsedS,
      riseK: kernel.riseK(),
      omega: kernel.omega,
      cem43Minutes: kernel.cem43Minutes,
      peakTemperatureC: kernel.peakTemperatureC,
    });
  }
  if (problem.onProgress !== undefined && lastReportedPercent !== 100) problem.onProgress(1);

  const temperatureC = kernel.riseK();
  const arterialC = medium.tissue.arterialTemperatureC;
  for (let index = 0; index < voxelCount; index++) temperatureC[index] += arterialC;
  return {
    temperatureC,
    peakTemperatureC: kernel.peakTemperatureC,
    omega: kernel.omega,
    cem43Minutes: kernel.cem43Minutes,
    stepCount: stepsDone,
    timeStepS: largestStepS,
    simulatedTimeS: phases.reduce((sum, phase) => sum + phase.durationS, 0),
  };
}

function checkPhases(phases: readonly HeatingPhase[], voxelCount: number): readonly HeatingPhase[] {
  if (!Array.isArray(phases) || phases.length === 0) {
    throw new RangeError('phases must hold at least one heating phase');
  }
  phases.forEach((phase, index) => {
    if (!(phase.durationS >= 0) || !Number.isFinite(phase.durationS)) {
      throw new RangeError(`phases[${index}].durationS must be 0 or more, got ${phase.durationS}`);
    }
    const source = phase.powerDensityWPerM3;
    if (source !== undefined && source !== null && source.length !== voxelCount) {
      throw new RangeError(
        `phases[${index}].powerDensityWPerM3 has ${source.length} voxels, the grid ${voxelCount}`,
      );
    }
  });
  return phases;
}

function perfusionStopsWithDamage(model: PerfusionModel): boolean {
  if (model !== 'constant' && model !== 'stops-with-damage') {
    throw new RangeError(`perfusionModel must be 'constant' or 'stops-with-damage'`);
  }
  return model === 'stops-with-damage';
}

/** The starting rise above the arterial temperature, kelvin, or null for none. */
function initialRise(
  medium: ResolvedMedium,
  initialTemperatureC: Float32Array | Float64Array | undefined,
): Float64Array | null {
  if (initialTemperatureC === undefined) return null;
  if (initialTemperatureC.length !== medium.voxelCount) {
    throw new RangeError(
      `initialTemperatureC has ${initialTemperatureC.length} voxels, the grid ${medium.voxelCount}`,
    );
  }
  const arterialC = medium.tissue.arterialTemperatureC;
  return Float64Array.from(initialTemperatureC, (temperatureC, index) => {
    if (!Number.isFinite(temperatureC)) {
      throw new RangeError(`initialTemperatureC[${index}] must be a finite number`);
    }
    return temperatureC - arterialC;
  });
}

function damageRateTable(
  problem: Readonly<PennesTransientProblem>,
  arterialC: number,
): DamageRateTable {
  const reference = problem.arrheniusReference ?? 'above-arterial';
  if (reference !== 'absolute' && reference !== 'above-arterial') {
    throw new RangeError(`arrheniusReference must be 'absolute' or 'above-arterial'`);
  }
  return new DamageRateTable(
    problem.arrhenius ?? LIVER_ARRHENIUS,
    arterialC,
    reference === 'above-arterial',
  );
}
