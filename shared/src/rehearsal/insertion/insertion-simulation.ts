/**
 * One insertion rehearsal run: the breathing liver (breathing.ts), the needle (needle.ts) and the
 * constraint solve (constraints.ts, compliance.ts) stepped together.
 *
 * A step has three parts so that a controller can search over needle poses within a step:
 *
 *   sim.beginStep();                          // free motion of the tissue (breathing, no needle)
 *   const trial = sim.solveConstraints(pose, depthMm); // as often as wanted: changes nothing
 *   sim.commitStep(trial);                    // keeps one: correction, puncture, shaft points
 *
 * `step(pose, depthMm)` does all three. Poses and depths are LPS millimetres; the tissue solver
 * works in SI (README).
 */
import { monotonicMs } from '../../assessment/assessment-stages';
import { distance, type Vec3 } from '../../geometry/vector';
import {
  TissueSolver,
  type TissueSolverOptions,
  type TissueSolverSnapshot,
} from '../fem/tissue-solver';
import type { TissueMaterial } from '../fem/material';
import { embedPoints, embeddedPosition, type Embedding } from '../mesh/embedding';
import type { TetMesh } from '../mesh/tet-mesh';
import {
  breathingBoundary,
  type BreathingBoundary,
  type BreathingBoundaryOptions,
  type BreathingParameters,
} from './breathing';
import { PrecomputedCompliance, type ComplianceStats } from './compliance';
import {
  ConstraintSolver,
  type ConstraintSolution,
  type ConstraintSolveOptions,
} from './constraints';
import { checkNumber, checkVec3, refuse } from './insertion-input';
import {
  checkPose,
  Needle,
  needleFrame,
  needleTipMm,
  type NeedleParameters,
  type NeedlePose,
  type NeedleRows,
  type NeedleStepReport,
} from './needle';

/** Everything a run needs; only the mesh and the plan are required. */
export interface InsertionSimulationOptions {
  mesh: TetMesh;
  /** The planned line: a point outside the organ where the needle comes from, and the target. */
  plan: { startMm: Vec3; targetMm: Vec3 };
  /** Breathing and supports (`wall.entryMm` defaults to where the plan enters the organ). */
  boundary?: Omit<BreathingBoundaryOptions, 'wall'> & {
    wall?: Partial<NonNullable<BreathingBoundaryOptions['wall']>> | null;
  };
  needle?: Partial<NeedleParameters>;
  /** Tissue solver settings (material, time step 10–50 ms, CG tolerance, preconditioner). */
  solver?: {
    material?: Partial<TissueMaterial>;
    timeStepS?: number;
    relativeTolerance?: number;
    preconditioner?: 'incomplete-cholesky' | 'jacobi';
  };
  /**
   * 'precomputed' (default): columns of A₀⁻¹ for the nodes near the planned line, warped by the
   * local rotations; 'exact': one solve per constraint row each step (small meshes, checks).
   */
  compliance?: 'precomputed' | 'exact';
  /**
   * With precomputed compliance: the correction from the table's whole columns ('table',
   * default, no solve) or one solve with the step's exact matrix ('solve'; README).
   */
  correction?: 'table' | 'solve';
  /** Nodes within this distance of the planned line go into the table, mm (default: a cell). */
  corridorMarginMm?: number;
  constraints?: ConstraintSolveOptions;
  /** Simulated time at the start, s (default 0). */
  startTimeS?: number;
}

/** A solved (not yet kept) constraint problem for one needle command. */
export interface ConstraintTrial {
  built: NeedleRows | null;
  solution: ConstraintSolution;
  /** The tip at the end of the step, LPS mm (null without a needle). */
  tipMm: Vec3 | null;
  /** Where the target would be if this trial were kept, LPS mm. */
  predictedTargetMm: Vec3;
  /** Wall time of this solve, ms. */
  solveMs: number;
}

/** What a kept step did. */
export interface StepRecord {
  timeS: number;
  depthMm: number | null;
  tipMm: Vec3 | null;
  targetMm: Vec3;
  /** |tip − target|, mm (null without a needle). */
  tipErrorMm: number | null;
  /** Distance of the target from the needle's line, mm (null without a needle). */
  lateralErrorMm: number | null;
  needle: NeedleStepReport | null;
  rows: number;
  sweeps: number;
  /** Largest |residual| of a bilateral row after the correction, m. */
  bilateralResidualM: number;
  /** Wall time: the free motion, and the constraint solve that was kept, ms. */
  freeMotionMs: number;
  constraintMs: number;
  /** Conjugate-gradient iterations of the free motion. */
  freeMotionIterations: number;
  /** The kept constraint solve's parts: building W, Gauss–Seidel, correction solves (ms). */
  constraintParts: {
    complianceMs: number;
    gaussSeidelMs: number;
    correctionMs: number;
    systemSolves: number;
  };
}

/**
 * Where a line first enters the mesh's surface (its nodes as imaged): the nearest crossing of
 * the segment from `fromMm` to `toMm` with a boundary triangle, by the ray–triangle test of
 * Möller & Trumbore (J Graphics Tools 1997). Null if it crosses none.
 */
export function surfaceEntry(
  mesh: TetMesh,
  fromMm: Vec3,
  toMm: Vec3,
): { pointMm: Vec3; distanceMm: number } | null {
  const d: Vec3 = [toMm[0] - fromMm[0], toMm[1] - fromMm[1], toMm[2] - fromMm[2]];
  const { nodes, boundaryFaces } = mesh;
  let bestT = Infinity;
  for (let face = 0; face < boundaryFaces.length / 3; face++) {
    const a = 3 * boundaryFaces[3 * face];
    const b = 3 * boundaryFaces[3 * face + 1];
    const c = 3 * boundaryFaces[3 * face + 2];
    const e1 = [nodes[b] - nodes[a], nodes[b + 1] - nodes[a + 1], nodes[b + 2] - nodes[a + 2]];
    const e2 = [nodes[c] - nodes[a], nodes[c + 1] - nodes[a + 1], nodes[c + 2] - nodes[a + 2]];
    const p = [
      d[1] * e2[2] - d[2] * e2[1],
      d[2] * e2[0] - d[0] * e2[2],
      d[0] * e2[1] - d[1] * e2[0],
    ];
    const det = e1[0] * p[0] + e1[1] * p[1] + e1[2] * p[2];
    if (Math.abs(det) < 1e-14) continue;
    const s = [fromMm[0] - nodes[a], fromMm[1] - nodes[a + 1], fromMm[2] - nodes[a + 2]];
    const u = (s[0] * p[0] + s[1] * p[1] + s[2] * p[2]) / det;
    if (u < -1e-12 || u > 1 + 1e-12) continue;
    const q = [
      s[1] * e1[2] - s[2] * e1[1],
      s[2] * e1[0] - s[0] * e1[2],
      s[0] * e1[1] - s[1] * e1[0],
    ];
    const v = (d[0] * q[0] + d[1] * q[1] + d[2] * q[2]) / det;
    if (v < -1e-12 || u + v > 1 + 1e-12) continue;
    const t = (e2[0] * q[0] + e2[1] * q[1] + e2[2] * q[2]) / det;
    if (t >= 0 && t <= 1 && t < bestT) bestT = t;
  }
  if (bestT === Infinity) return null;
  const length = Math.hypot(d[0], d[1], d[2]);
  return {
    pointMm: [fromMm[0] + bestT * d[0], fromMm[1] + bestT * d[1], fromMm[2] + bestT * d[2]],
    distanceMm: bestT * length,
  };
}

/**
 * Nodes that a needle along the planned segment can touch: the corners of the tets the segment
 * passes through (sampled every tenth of a cell) and every node within `marginMm` of it.
 */
export function corridorNodes(
  mesh: TetMesh,
  fromMm: Vec3,
  toMm: Vec3,
  marginMm: number,
): Uint32Array {
  const chosen = new Set<number>();
  const length = distance(fromMm, toMm);
  const samples = Math.max(2, Math.ceil(length / (mesh.cellMm / 10)) + 1);
  const points: Vec3[] = [];
  for (let s = 0; s < samples; s++) {
    const t = s / (samples - 1);
    points.push([
      fromMm[0] + t * (toMm[0] - fromMm[0]),
      fromMm[1] + t * (toMm[1] - fromMm[1]),
      fromMm[2] + t * (toMm[2] - fromMm[2]),
    ]);
  }
  for (const found of embedPoints(mesh, points)) {
    if (found) for (let c = 0; c < 4; c++) chosen.add(mesh.tets[4 * found.tet + c]);
  }
  const d: Vec3 = [toMm[0] - fromMm[0], toMm[1] - fromMm[1], toMm[2] - fromMm[2]];
  const squaredLength = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
  for (let node = 0; node < mesh.nodes.length / 3; node++) {
    const r = [0, 1, 2].map((a) => mesh.nodes[3 * node + a] - fromMm[a]);
    const t = Math.min(1, Math.max(0, (r[0] * d[0] + r[1] * d[1] + r[2] * d[2]) / squaredLength));
    const gap = Math.hypot(r[0] - t * d[0], r[1] - t * d[1], r[2] - t * d[2]);
    if (gap <= marginMm) chosen.add(node);
  }
  return Uint32Array.from([...chosen].sort((a, b) => a - b));
}

/** A liver, its supports and breathing, a needle and a target, stepped together. */
export class InsertionSimulation {
  readonly mesh: TetMesh;
  readonly solver: TissueSolver;
  readonly breathing: BreathingBoundary;
  /** The needle (a fresh one after `restoreState`). */
  needle: Needle;
  private readonly needleParameters: Partial<NeedleParameters> | undefined;
  readonly constraintSolver: ConstraintSolver;
  /** The table of the precomputed compliance (null in exact mode). */
  readonly complianceTable: PrecomputedCompliance | null;
  /** Where the planned line enters the organ, as imaged, LPS mm. */
  readonly capsuleEntryMm: Vec3;
  /** Distance from the plan's start to that entry, mm. */
  readonly entryDistanceMm: number;
  readonly target: Embedding;
  /** Wall time of the compliance precomputation, ms (0 in exact mode). */
  readonly precomputeMs: number;

  private readonly constraintOptions: ConstraintSolveOptions;
  private readonly stepStartPositions: Float64Array;
  private stepStart: TissueSolverSnapshot | null = null;
  private freeMotionMs = 0;
  private freeMotionIterations = 0;
  private isInStep = false;
  /** The free motion of the step begun carries the needle's last impulses as forces. */
  private isPreloaded = false;
  private readonly preloadForces: Float64Array;

  constructor(options: InsertionSimulationOptions) {
    const { mesh } = options;
    if (!mesh || !(mesh.nodes instanceof Float64Array) || !(mesh.tets instanceof Uint32Array)) {
      refuse('mesh', 'The mesh must be a TetMesh (nodes, tets, boundaryFaces, cellMm).');
    }
    this.mesh = mesh;
    const startMm = checkVec3(options.plan?.startMm, 'plan.startMm');
    const targetMm = checkVec3(options.plan?.targetMm, 'plan.targetMm');
    const [targetEmbedding, startEmbedding] = embedPoints(mesh, [targetMm, startMm]);
    if (!targetEmbedding) refuse('plan.targetMm', 'The target lies outside the organ mesh.');
    if (startEmbedding) {
      refuse('plan.startMm', 'The needle must start outside the organ: the start lies inside.');
    }
    this.target = targetEmbedding;
    const entry = surfaceEntry(mesh, startMm, targetMm);
    if (!entry) refuse('plan', 'The planned line does not cross the organ surface.');
    this.capsuleEntryMm = entry.pointMm;
    this.entryDistanceMm = entry.distanceMm;

    const timeStepS = checkNumber(
      options.solver?.timeStepS ?? 0.02,
      'solver.timeStepS',
      0.01,
      0.05,
    );
    const wall = options.boundary?.wall;
    this.breathing = breathingBoundary(mesh, {
      ...options.boundary,
      wall: wall === null ? null : { ...(wall ?? {}), entryMm: wall?.entryMm ?? entry.pointMm },
    });
    const solverOptions: TissueSolverOptions = {
      material: options.solver?.material,
      timeStepS,
      relativeTolerance: options.solver?.relativeTolerance,
      preconditioner: options.solver?.preconditioner,
      boundary: this.breathing.boundary,
    };
    this.solver = new TissueSolver(mesh, solverOptions);
    const startTimeS = checkNumber(options.startTimeS ?? 0, 'startTimeS', -1e9, 1e9);
    this.solver.setState({ timeS: startTimeS });
    this.needleParameters = options.needle;
    this.needle = new Needle(mesh, options.needle);
    this.constraintOptions = options.constraints ?? {};

    const mode = options.compliance ?? 'precomputed';
    if (mode !== 'precomputed' && mode !== 'exact') {
      refuse('compliance', "compliance must be 'precomputed' or 'exact'.");
    }
    if (mode === 'precomputed') {
      const margin = checkNumber(
        options.corridorMarginMm ?? mesh.cellMm,
        'corridorMarginMm',
        0,
        1000,
      );
      const started = monotonicMs();
      this.complianceTable = new PrecomputedCompliance(
        mesh,
        solverOptions,
        corridorNodes(mesh, entry.pointMm, targetMm, margin),
      );
      this.precomputeMs = monotonicMs() - started;
      const correction = options.correction ?? 'table';
      if (correction !== 'table' && correction !== 'solve') {
        refuse('correction', "correction must be 'table' or 'solve'.");
      }
      this.constraintSolver = new ConstraintSolver(this.solver, {
        kind: 'precomputed',
        table: this.complianceTable,
        correction,
      });
    } else {
      this.complianceTable = null;
      this.precomputeMs = 0;
      this.constraintSolver = new ConstraintSolver(this.solver, { kind: 'exact' });
    }
    this.stepStartPositions = this.solver.positionsM.slice();
    this.preloadForces = new Float64Array(this.stepStartPositions.length);
  }

  get timeS(): number {
    return this.solver.timeS;
  }

  get breathingParameters(): BreathingParameters {
    return this.breathing.parameters;
  }

  /** The tissue's node positions now, LPS mm (a copy). */
  positionsMm(): Float64Array {
    return this.solver.positionsM.map((v) => v * 1000);
  }

  /** The embedded target now, LPS mm. */
  targetMm(): Vec3 {
    return embeddedPosition(this.solver.positionsM, this.mesh, this.target).map(
      (v) => v * 1000,
    ) as Vec3;
  }

  /** Compliance table figures (null in exact mode). */
  complianceStats(): ComplianceStats | null {
    return this.complianceTable ? { ...this.complianceTable.stats } : null;
  }

  /**
   * The tissue's free motion to the end of the next step: breathing and supports, and — once
   * the needle holds tissue — the forces it held it with in the last step (so that the
   * constraint solve only has to find what changes; README).
   */
  beginStep(options: { keepStart?: boolean } = {}): void {
    if (this.isInStep) refuse('step', 'The step was begun already: commit it first.');
    this.stepStartPositions.set(this.solver.positionsM);
    // A controller that redoes the free motion ('full-step') keeps the whole start.
    this.stepStart = options.keepStart ? this.solver.snapshot() : null;
    this.isPreloaded = this.needle.points.length > 0;
    if (this.isPreloaded) {
      this.preloadForces.fill(0);
      this.needle.addPreloadForces(this.preloadForces, this.solver.timeStepS);
      this.solver.setExternalForces(this.preloadForces);
    } else {
      this.solver.setExternalForces(null);
    }
    const started = monotonicMs();
    const report = this.solver.freeMotion();
    this.freeMotionMs = monotonicMs() - started;
    this.freeMotionIterations = report.solve.iterations;
    this.isInStep = true;
  }

  /**
   * Goes back to the start of the step begun and solves its free motion again (the same
   * forces): what a controller that runs a whole simulation step per trial pays (the assisted
   * rehearsal's 'full-step' Jacobian).
   */
  redoFreeMotion(): void {
    if (!this.isInStep || !this.stepStart) {
      refuse('step', 'Begin the step with keepStart before redoing its free motion.');
    }
    this.solver.restore(this.stepStart);
    const started = monotonicMs();
    const report = this.solver.freeMotion();
    this.freeMotionMs = monotonicMs() - started;
    this.freeMotionIterations = report.solve.iterations;
  }

  /**
   * The tissue's state between steps, before the needle has touched it (a warm-up shared by
   * several insertions); `restoreState` goes back to it with a fresh needle.
   */
  saveState(): TissueSolverSnapshot {
    if (this.isInStep) refuse('step', 'Commit the step before saving the state.');
    if (this.needle.points.length > 0 || this.needle.punctured) {
      refuse('needle', 'The state is saved before the needle touches the tissue.');
    }
    return this.solver.snapshot();
  }

  restoreState(state: TissueSolverSnapshot): void {
    if (this.isInStep) refuse('step', 'Commit the step before restoring a state.');
    this.solver.restore(state);
    this.needle = new Needle(this.mesh, this.needleParameters);
    this.isPreloaded = false;
    this.solver.setExternalForces(null);
  }

  /** Whether a step has been begun and not yet committed. */
  get inStep(): boolean {
    return this.isInStep;
  }

  /** Whether the free motion of the step begun carries the needle's last impulses. */
  get preloaded(): boolean {
    return this.isPreloaded;
  }

  /** Node positions at the start of the step begun, m (where the warped compliance rotates). */
  get stepStartPositionsM(): Float64Array {
    return this.stepStartPositions;
  }

  /** The settings of the constraint solve. */
  get constraintSolveOptions(): ConstraintSolveOptions {
    return this.constraintOptions;
  }

  /**
   * The needle's constraint rows for the step begun with the needle at (pose, depthMm): pure,
   * for a controller that solves in constraint space itself.
   */
  buildNeedleRows(pose: NeedlePose, depthMm: number): NeedleRows {
    if (!this.isInStep) refuse('step', 'Begin the step (free motion) before building rows.');
    return this.needle.buildRows(
      this.solver.positionsM,
      pose,
      depthMm,
      this.solver.timeStepS,
      this.isPreloaded,
    );
  }

  /** Where embedded points would be if this trial were kept, LPS mm. */
  predictedPointsMm(trial: ConstraintTrial, points: readonly Embedding[]): Vec3[] {
    const h = this.solver.timeStepS;
    const x = this.solver.positionsM;
    const dv = trial.solution.velocityCorrection;
    return points.map((point) => {
      const out: Vec3 = [0, 0, 0];
      for (let c = 0; c < 4; c++) {
        const node = this.mesh.tets[4 * point.tet + c];
        const weight = point.weights[c];
        for (let a = 0; a < 3; a++) {
          const dof = 3 * node + a;
          out[a] += weight * 1000 * (x[dof] + (dv.length > 0 ? h * dv[dof] : 0));
        }
      }
      return out;
    });
  }

  /**
   * Solves the needle's constraints for the step begun, with the needle at (pose, depthMm) at
   * the step's end; null = no needle. Changes nothing: call it again with another command, then
   * commit the trial to keep.
   */
  solveConstraints(pose: NeedlePose | null, depthMm = 0): ConstraintTrial {
    if (!this.isInStep) refuse('step', 'Begin the step (free motion) before solving it.');
    const started = monotonicMs();
    let built: NeedleRows | null = null;
    let tipMm: Vec3 | null = null;
    if (pose === null && this.isPreloaded) {
      refuse('pose', 'The needle holds tissue: give its pose (it cannot vanish from the organ).');
    }
    if (pose !== null) {
      const checked = checkPose(pose);
      checkNumber(depthMm, 'depthMm', -1e4, 1e4);
      built = this.needle.buildRows(
        this.solver.positionsM,
        checked,
        depthMm,
        this.solver.timeStepS,
        this.isPreloaded,
      );
      tipMm = needleTipMm(checked, depthMm);
    }
    const solution = this.constraintSolver.solve(
      built?.rows ?? [],
      this.constraintOptions,
      this.stepStartPositions,
    );
    const h = this.solver.timeStepS;
    const predicted: Vec3 = [0, 0, 0];
    for (let c = 0; c < 4; c++) {
      const node = this.mesh.tets[4 * this.target.tet + c];
      const weight = this.target.weights[c];
      for (let a = 0; a < 3; a++) {
        const dof = 3 * node + a;
        predicted[a] +=
          weight * 1000 * (this.solver.positionsM[dof] + h * solution.velocityCorrection[dof]);
      }
    }
    return {
      built,
      solution,
      tipMm,
      predictedTargetMm: predicted,
      solveMs: monotonicMs() - started,
    };
  }

  /** Keeps a trial of the step begun: applies its correction and updates the needle. */
  commitStep(trial: ConstraintTrial): StepRecord {
    if (!this.isInStep) refuse('step', 'There is no step to commit.');
    this.constraintSolver.apply(trial.solution);
    this.isInStep = false;
    let report: NeedleStepReport | null = null;
    if (trial.built) {
      report = this.needle.commit(
        this.solver.positionsM,
        trial.built,
        trial.solution,
        this.solver.timeStepS,
      );
    }
    const targetMm = this.targetMm();
    let lateralErrorMm: number | null = null;
    if (trial.built) {
      const { axis } = needleFrame(trial.built.pose);
      const base = trial.built.pose.baseMm;
      const r: Vec3 = [targetMm[0] - base[0], targetMm[1] - base[1], targetMm[2] - base[2]];
      const along = r[0] * axis[0] + r[1] * axis[1] + r[2] * axis[2];
      lateralErrorMm = Math.hypot(
        r[0] - along * axis[0],
        r[1] - along * axis[1],
        r[2] - along * axis[2],
      );
    }
    let bilateralResidualM = 0;
    trial.solution.rows.forEach((row, i) => {
      if (row.kind === 'bilateral') {
        bilateralResidualM = Math.max(bilateralResidualM, Math.abs(trial.solution.residualM[i]));
      }
    });
    return {
      timeS: this.solver.timeS,
      depthMm: trial.built ? trial.built.depthMm : null,
      tipMm: trial.tipMm,
      targetMm,
      tipErrorMm: trial.tipMm ? distance(trial.tipMm, targetMm) : null,
      lateralErrorMm,
      needle: report,
      rows: trial.solution.rows.length,
      sweeps: trial.solution.sweeps,
      bilateralResidualM,
      freeMotionMs: this.freeMotionMs,
      constraintMs: trial.solveMs,
      freeMotionIterations: this.freeMotionIterations,
      constraintParts: {
        complianceMs: trial.solution.timingMs.compliance,
        gaussSeidelMs: trial.solution.timingMs.gaussSeidel,
        correctionMs: trial.solution.timingMs.correction,
        systemSolves: trial.solution.systemSolves,
      },
    };
  }

  /** A whole step with the needle at (pose, depthMm) at its end; null = no needle. */
  step(pose: NeedlePose | null, depthMm = 0): StepRecord {
    this.beginStep();
    return this.commitStep(this.solveConstraints(pose, depthMm));
  }
}
