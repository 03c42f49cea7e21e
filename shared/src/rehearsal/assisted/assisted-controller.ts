/**
 * Robot-assisted insertion by inverse simulation: each control step chooses the needle base's
 * six degrees of freedom so that, at the end of the step, the tip is on the planned path
 * (path-objective.ts) while the depth advances at the set speed (README.md).
 *
 * A control step:
 *   1. the tissue's free motion (breathing, supports, last step's needle forces);
 *   2. the Jacobian J (3 × 6) of the tip's path error e with respect to the base's degrees of
 *      freedom, by central differences (12 perturbations), in one of four ways (`strategy`);
 *   3. a damped least-squares update (Wampler 1986; Nakamura & Hanafusa 1986):
 *      Δq̃ = J̃ᵀ·(J̃·J̃ᵀ + μ²·I)⁻¹·(−e), J̃ = J·S⁻¹ with S = diag(1, 1, 1, L, L, L) turning angles
 *      into the tip's displacement (L the inserted depth, at least 10 mm), the step capped at
 *      `maxStepMm`;
 *   4. the step with the new command: constraint solve, correction, commit.
 *
 * Degrees of freedom: base translation along L, P, S (mm), rotations about the shaft's two
 * across-axes through the base (rad), roll about the shaft (rad; a straight symmetric needle
 * does not feel it, so its column is zero and the damping keeps it still).
 */
import { monotonicMs } from '../../assessment/assessment-stages';
import type { RehearsalStrategy } from '../../api/assessments';
import type { Vec3 } from '../../geometry/vector';
import { checkNumber, refuse } from '../insertion/insertion-input';
import type { InsertionSimulation, StepRecord } from '../insertion/insertion-simulation';
import { needleFrame, type NeedlePose } from '../insertion/needle';
import { factorActiveSet, observeWithActiveSet } from './active-set';
import { solveInConstraintSpace, type RotationCache } from './constraint-space';
import { tipPathErrorMm, type PathObjective } from './path-objective';

/** Settings of the controller. */
export interface AssistedControlOptions {
  /** How the Jacobian is found (default 'pseudo-constraints', the reference). */
  strategy?: RehearsalStrategy;
  /** Perturbation of the base's translation, mm (default 0.5). */
  translationStepMm?: number;
  /** Tip displacement the rotation perturbations make, mm (default 0.5: angle 0.5/L). */
  rotationTipStepMm?: number;
  /** Damping μ of the least-squares update, mm (default 0.05). */
  dampingMm?: number;
  /** Largest change of the command per step, in the scaled units, mm (default 1.5). */
  maxStepMm?: number;
}

/** What one control step did. */
export interface ControlStepRecord {
  record: StepRecord;
  pose: NeedlePose;
  /** The path error the step would have ended with on the old command, mm. */
  errorBeforeMm: Vec3;
  /** The path error predicted for the new command (e + J·Δq), mm. */
  predictedErrorMm: Vec3;
  /** J (3 × 6 row-major, mm per mm or per rad). */
  jacobian: Float64Array;
  /** Wall time of the whole control step and of the Jacobian, ms. */
  stepMs: number;
  jacobianMs: number;
}

/** The pose after a change q of the six degrees of freedom (see the file's comment). */
export function displacedPose(pose: NeedlePose, q: ArrayLike<number>): NeedlePose {
  const { axis, across1, across2 } = needleFrame(pose);
  const r: Vec3 = [0, 1, 2].map((a) => q[3] * across1[a] + q[4] * across2[a]) as Vec3;
  const angle = Math.hypot(r[0], r[1], r[2]);
  let direction: Vec3 = [...axis];
  if (angle > 0) {
    // Rodrigues: v cos θ + (k × v) sin θ + k (k·v)(1 − cos θ).
    const k: Vec3 = [r[0] / angle, r[1] / angle, r[2] / angle];
    const kv = k[0] * axis[0] + k[1] * axis[1] + k[2] * axis[2];
    const cross: Vec3 = [
      k[1] * axis[2] - k[2] * axis[1],
      k[2] * axis[0] - k[0] * axis[2],
      k[0] * axis[1] - k[1] * axis[0],
    ];
    const c = Math.cos(angle);
    const s = Math.sin(angle);
    direction = [0, 1, 2].map((a) => axis[a] * c + cross[a] * s + k[a] * kv * (1 - c)) as Vec3;
  }
  return {
    baseMm: [pose.baseMm[0] + q[0], pose.baseMm[1] + q[1], pose.baseMm[2] + q[2]],
    direction,
    rollRad: pose.rollRad + q[5],
  };
}

/** Steers the needle of a simulation along a path objective. */
export class AssistedController {
  readonly strategy: RehearsalStrategy;
  private readonly translationStepMm: number;
  private readonly rotationTipStepMm: number;
  private readonly dampingMm: number;
  private readonly maxStepMm: number;

  constructor(
    readonly simulation: InsertionSimulation,
    readonly objective: PathObjective,
    options: AssistedControlOptions = {},
  ) {
    const strategy = options.strategy ?? 'pseudo-constraints';
    if (
      !['full-step', 'resolve-constraints', 'pseudo-constraints', 'factorised'].includes(strategy)
    ) {
      refuse('strategy', `Unknown Jacobian strategy “${String(strategy)}”.`);
    }
    this.strategy = strategy;
    this.translationStepMm = checkNumber(
      options.translationStepMm ?? 0.5,
      'translationStepMm',
      1e-4,
      10,
    );
    this.rotationTipStepMm = checkNumber(
      options.rotationTipStepMm ?? 0.5,
      'rotationTipStepMm',
      1e-4,
      10,
    );
    this.dampingMm = checkNumber(options.dampingMm ?? 0.05, 'dampingMm', 0, 100);
    this.maxStepMm = checkNumber(options.maxStepMm ?? 1.5, 'maxStepMm', 0.01, 100);
  }

  /**
   * The path error at the end of the step begun for each command, and how many evaluations it
   * took; the Jacobian's strategy decides how each is found.
   */
  private errorsFor(poses: NeedlePose[], depthMm: number): Vec3[] {
    const sim = this.simulation;
    const { entry, target, plannedDepthMm } = this.objective;
    const fromPoints = (pose: NeedlePose, points: Vec3[]): Vec3 =>
      tipPathErrorMm(pose, depthMm, points[0], points[1], plannedDepthMm);
    const cache: RotationCache = new Map();
    switch (this.strategy) {
      case 'full-step':
        // A whole step per command: the free motion again, the constraint solve, the correction.
        return poses.map((pose, i) => {
          if (i > 0) sim.redoFreeMotion();
          const trial = sim.solveConstraints(pose, depthMm);
          return fromPoints(pose, sim.predictedPointsMm(trial, [entry, target]));
        });
      case 'resolve-constraints':
        // The free motion kept; the constraint solve and its correction repeated.
        return poses.map((pose) => {
          const trial = sim.solveConstraints(pose, depthMm);
          return fromPoints(pose, sim.predictedPointsMm(trial, [entry, target]));
        });
      case 'pseudo-constraints':
        // The constraint-space solve alone, the path's ends read as observation rows.
        return poses.map((pose) => {
          const rows = sim.buildNeedleRows(pose, depthMm).rows;
          return fromPoints(
            pose,
            solveInConstraintSpace(sim, rows, [entry, target], cache).observedMm,
          );
        });
      case 'factorised': {
        const nominal = solveInConstraintSpace(
          sim,
          sim.buildNeedleRows(poses[0], depthMm).rows,
          [entry, target],
          cache,
        );
        const factored = factorActiveSet(nominal);
        const h = sim.solver.timeStepS;
        return poses.map((pose, i) => {
          if (i === 0) return fromPoints(pose, nominal.observedMm);
          const rows = sim.buildNeedleRows(pose, depthMm).rows;
          const points = factored ? observeWithActiveSet(factored, rows, h) : null;
          return fromPoints(
            pose,
            points ?? solveInConstraintSpace(sim, rows, [entry, target], cache).observedMm,
          );
        });
      }
    }
  }

  /**
   * The nominal error and the Jacobian at `pose` for the step begun (central differences).
   * For 'full-step' the simulation is left at the step's free motion again.
   */
  jacobianAt(pose: NeedlePose, depthMm: number): { errorMm: Vec3; jacobian: Float64Array } {
    const lever = Math.max(10, depthMm);
    const steps = [
      this.translationStepMm,
      this.translationStepMm,
      this.translationStepMm,
      this.rotationTipStepMm / lever,
      this.rotationTipStepMm / lever,
      this.rotationTipStepMm / lever,
    ];
    const poses: NeedlePose[] = [pose];
    for (let k = 0; k < 6; k++) {
      for (const sign of [1, -1]) {
        const q = [0, 0, 0, 0, 0, 0];
        q[k] = sign * steps[k];
        poses.push(displacedPose(pose, q));
      }
    }
    const errors = this.errorsFor(poses, depthMm);
    const jacobian = new Float64Array(18);
    for (let k = 0; k < 6; k++) {
      const plus = errors[1 + 2 * k];
      const minus = errors[2 + 2 * k];
      for (let a = 0; a < 3; a++) jacobian[a * 6 + k] = (plus[a] - minus[a]) / (2 * steps[k]);
    }
    return { errorMm: errors[0], jacobian };
  }

  /** One control step from `pose` to insertion depth `depthMm`. */
  step(pose: NeedlePose, depthMm: number): ControlStepRecord {
    const started = monotonicMs();
    const sim = this.simulation;
    sim.beginStep({ keepStart: this.strategy === 'full-step' });
    const jacobianStart = monotonicMs();
    const { errorMm, jacobian } = this.jacobianAt(pose, depthMm);
    const jacobianMs = monotonicMs() - jacobianStart;
    const { change, predictedErrorMm } = dampedLeastSquares(
      jacobian,
      errorMm,
      Math.max(10, depthMm),
      this.dampingMm,
      this.maxStepMm,
    );
    const next = displacedPose(pose, change);
    const record = sim.commitStep(sim.solveConstraints(next, depthMm));
    return {
      record,
      pose: next,
      errorBeforeMm: errorMm,
      predictedErrorMm,
      jacobian,
      stepMs: monotonicMs() - started,
      jacobianMs,
    };
  }
}

/**
 * Δq = S⁻¹·J̃ᵀ·(J̃·J̃ᵀ + μ²·I)⁻¹·(−e), J̃ = J·S⁻¹, S = diag(1, 1, 1, L, L, L); the scaled step
 * capped at `maxStepMm`. Returns Δq and e + J·Δq.
 */
export function dampedLeastSquares(
  jacobian: Float64Array,
  errorMm: Vec3,
  leverMm: number,
  dampingMm: number,
  maxStepMm: number,
): { change: Float64Array; predictedErrorMm: Vec3 } {
  const scaleOf = (k: number) => (k < 3 ? 1 : leverMm);
  const scaled = new Float64Array(18);
  for (let a = 0; a < 3; a++) {
    for (let k = 0; k < 6; k++) scaled[a * 6 + k] = jacobian[a * 6 + k] / scaleOf(k);
  }
  // M = J̃·J̃ᵀ + μ²·I (3 × 3), y = M⁻¹·(−e) by Cramer's rule (M is symmetric positive definite).
  const m = new Float64Array(9);
  for (let a = 0; a < 3; a++) {
    for (let c = 0; c < 3; c++) {
      let sum = a === c ? dampingMm * dampingMm : 0;
      for (let k = 0; k < 6; k++) sum += scaled[a * 6 + k] * scaled[c * 6 + k];
      m[3 * a + c] = sum;
    }
  }
  const y = solve3(m, [-errorMm[0], -errorMm[1], -errorMm[2]]);
  const step = new Float64Array(6);
  for (let k = 0; k < 6; k++) {
    step[k] = scaled[k] * y[0] + scaled[6 + k] * y[1] + scaled[12 + k] * y[2];
  }
  const length = Math.hypot(...step);
  if (length > maxStepMm) for (let k = 0; k < 6; k++) step[k] *= maxStepMm / length;
  const change = new Float64Array(6);
  for (let k = 0; k < 6; k++) change[k] = step[k] / scaleOf(k);
  const predictedErrorMm: Vec3 = [0, 1, 2].map((a) => {
    let sum = errorMm[a];
    for (let k = 0; k < 6; k++) sum += jacobian[a * 6 + k] * change[k];
    return sum;
  }) as Vec3;
  return { change, predictedErrorMm };
}

function solve3(m: Float64Array, rhs: Vec3): Vec3 {
  const det =
    m[0] * (m[4] * m[8] - m[5] * m[7]) -
    m[1] * (m[3] * m[8] - m[5] * m[6]) +
    m[2] * (m[3] * m[7] - m[4] * m[6]);
  if (!(Math.abs(det) > 1e-300)) return [0, 0, 0];
  const out: Vec3 = [0, 0, 0];
  for (let index = 0; index < 3; index++) {
    const c = Float64Array.from(m);
    for (let a = 0; a < 3; a++) c[3 * a + index] = rhs[a];
    out[index] =
      (c[0] * (c[4] * c[8] - c[5] * c[7]) -
        c[1] * (c[3] * c[8] - c[5] * c[6]) +
        c[2] * (c[3] * c[7] - c[4] * c[6])) /
      det;
  }
  return out;
}
