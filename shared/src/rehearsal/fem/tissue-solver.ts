/**
 * The tissue solver of the insertion rehearsal: a corotational linear-tetrahedron model of
 * liver (Müller & Gross, Interactive virtual materials, Graphics Interface 2004) stepped by
 * backward Euler linearised once per step (Baraff & Witkin, Large steps in cloth simulation,
 * SIGGRAPH 1998). The derivation and the sources are in this folder's README.
 *
 * Units: SI everywhere (m, kg, s, N, Pa) — except the mesh's node positions, which arrive in
 * millimetres (LPS) and are converted to metres once, in the constructor. Every position,
 * velocity, force and target going in or out of this class afterwards is SI.
 */
import { buildBlockPattern, blockMultiply, type BlockPattern } from './block-csr';
import { FemInputError, FemNumericalError } from './fem-errors';
import { lameParameters, resolveMaterial, type TissueMaterial } from './material';
import { IncompleteCholesky } from './incomplete-cholesky';
import { PcgWorkspace, projectedPcg, type PcgReport } from './pcg';
import { rotationOfDeformation } from './polar-decomposition';
import { tetRestData } from './tet-element';

/** Metres per millimetre: the one conversion, applied to the mesh's node positions. */
export const METRES_PER_MILLIMETRE = 1e-3;

/** The part of a tetrahedral mesh the solver reads (a rehearsal TetMesh fits). */
export interface FemMesh {
  /** Node positions, 3 per node, millimetres (LPS). Read once and converted to metres. */
  readonly nodes: Float64Array;
  /** Four node indices per tetrahedron, positively oriented (det[x1−x0, x2−x0, x3−x0] > 0). */
  readonly tets: Uint32Array;
}

/** A coordinate axis of the LPS frame: 0 = x, 1 = y, 2 = z. */
export type Axis = 0 | 1 | 2;

/** A point or vector, metres. */
export type PointM = readonly [number, number, number];

/** A node held where it is (Dirichlet), on all axes or the listed ones. */
export interface FixedNode {
  node: number;
  axes?: readonly Axis[];
}

/**
 * A node whose position is prescribed as a function of time (Dirichlet, moving): at the end of
 * the step to time t it is exactly at positionM(t) on its axes (all three unless listed).
 */
export interface DrivenNode {
  node: number;
  /** Position at time t (s), metres; only the components of `axes` are read. */
  positionM: (timeS: number) => PointM;
  axes?: readonly Axis[];
}

/** A zero-length spring of stiffness k from a node to a target that may move with time. */
export interface SoftAttachment {
  node: number;
  /** Spring stiffness k, N/m (0 switches it off). */
  stiffnessNPerM: number;
  /** Target, metres: fixed, or a function of time (s). */
  targetM: PointM | ((timeS: number) => PointM);
}

/** Boundary conditions; a node's axis may be fixed or driven, not both. */
export interface BoundaryConditions {
  fixed?: readonly FixedNode[];
  driven?: readonly DrivenNode[];
  attachments?: readonly SoftAttachment[];
}

/** Construction options; everything has a default. */
export interface TissueSolverOptions {
  /** Material; missing fields take LIVER_MATERIAL's values. */
  material?: Partial<TissueMaterial>;
  /** Time step h, s (default 0.02; the rehearsal uses 0.01–0.05). */
  timeStepS?: number;
  /** Relative tolerance of every conjugate-gradient solve (default 1e-6). */
  relativeTolerance?: number;
  /** Iteration cap of every conjugate-gradient solve (default 2000). */
  maxIterations?: number;
  /**
   * Preconditioner of the conjugate gradients: 'incomplete-cholesky' (default; IC(0), about a
   * quarter of the iterations, a factorisation per step) or 'jacobi' (the diagonal).
   */
  preconditioner?: 'incomplete-cholesky' | 'jacobi';
  boundary?: BoundaryConditions;
  /**
   * 'corotational' (default) or 'linear' (R = I: plain linear elasticity, wrong under large
   * rotations — there to show the difference, not for use).
   */
  rotation?: 'corotational' | 'linear';
}

/** What one step did. */
export interface StepReport {
  /** Time at the end of the step, s. */
  timeS: number;
  /** The conjugate-gradient solve of the step's system. */
  solve: PcgReport;
}

/** What a static solve did. */
export interface StaticReport {
  /** Newton-like iterations (each one linear solve with the corotational stiffness). */
  iterations: number;
  /** Conjugate-gradient iterations over all of them. */
  pcgIterations: number;
  /** Largest position change of the last iteration, m. */
  lastUpdateM: number;
  converged: boolean;
}

/** Energies of the current state, joules. */
export interface EnergyReport {
  kineticJ: number;
  /** Σ ½·V·ε:σ with the corotated strain ε = sym(Rᵀ·F) − I. */
  elasticJ: number;
  /** Σ ½·k·|target − x|² of the soft attachments, targets at the current time. */
  attachmentJ: number;
}

interface DrivenEntry {
  node: number;
  axes: readonly Axis[];
  positionM: (timeS: number) => PointM;
}

interface AttachmentEntry {
  node: number;
  stiffnessNPerM: number;
  targetM: (timeS: number) => PointM;
}

const ALL_AXES: readonly Axis[] = [0, 1, 2];

/**
 * A liver (or any homogeneous tissue) meshed with linear tetrahedra.
 *
 * Per step: `step()`, or, for a constraint solver, `freeMotion()` then any number of
 * `solveSystem()` and `applyCorrection()` calls. The positions and velocities are live arrays
 * owned by the solver: read them, change them only through `setState`.
 */
/** A solver's state for `restore` (TissueSolver.snapshot). */
export interface TissueSolverSnapshot {
  positionsM: Float64Array;
  velocitiesMPerS: Float64Array;
  timeS: number;
  freeChange: Float64Array;
}

export class TissueSolver {
  readonly nodeCount: number;
  readonly material: Readonly<TissueMaterial>;
  readonly timeStepS: number;
  /** Rest positions, 3 per node, m. */
  readonly restPositionsM: Float64Array;
  /** Current positions, 3 per node, m (live; read only). */
  readonly positionsM: Float64Array;
  /** Current velocities, 3 per node, m/s (live; read only). */
  readonly velocitiesMPerS: Float64Array;
  /** Lumped mass of each node, kg: ρ·V/4 from each of its tetrahedra. */
  readonly massKg: Float64Array;

  private readonly tets: Uint32Array;
  private readonly restInverse: Float64Array;
  private readonly volumes: Float64Array;
  private readonly lambdaPa: number;
  private readonly muPa: number;
  private readonly isCorotational: boolean;
  private readonly pcgOptions: { relativeTolerance: number; maxIterations: number };
  private readonly pattern: BlockPattern;
  /** Tangent stiffness Σ R·Ke·Rᵀ at the last assembly, 9 per slot. */
  private readonly stiffness: Float64Array;
  private readonly elasticForces: Float64Array;
  private externalForces: Float64Array | null = null;
  private constrained: Uint8Array;
  private driven: DrivenEntry[] = [];
  private attachments: AttachmentEntry[] = [];
  private attachmentStiffness: Float64Array;
  private time = 0;

  // The current step's system A = diag(d) + kScale·K on the free unknowns.
  private isSystemReady = false;
  private readonly systemDiagonal: Float64Array;
  private systemStiffnessScale = 0;
  private readonly inverseDiagonal: Float64Array;
  private readonly cholesky: IncompleteCholesky | null;
  private isCholeskyReady = false;

  // Work vectors.
  private readonly work: PcgWorkspace;
  private readonly rhs: Float64Array;
  private readonly known: Float64Array;
  private readonly product: Float64Array;
  private readonly solution: Float64Array;
  /** Free part of the last step's Δv: the starting guess of the next step's solve. */
  private readonly previousFreeChange: Float64Array;
  private readonly f = new Float64Array(9);
  private readonly r = new Float64Array(9);
  private readonly rotatedGradients = new Float64Array(12);

  constructor(mesh: FemMesh, options: TissueSolverOptions = {}) {
    const { nodes, tets } = mesh;
    if (!(nodes instanceof Float64Array) || nodes.length === 0 || nodes.length % 3 !== 0) {
      throw new FemInputError('Mesh nodes must be a non-empty Float64Array, 3 numbers a node.');
    }
    if (!(tets instanceof Uint32Array) || tets.length === 0 || tets.length % 4 !== 0) {
      throw new FemInputError('Mesh tets must be a non-empty Uint32Array, 4 node indices a tet.');
    }
    for (let index = 0; index < nodes.length; index++) {
      if (!Number.isFinite(nodes[index])) {
        throw new FemInputError(`Mesh node ${Math.floor(index / 3)} has a non-finite coordinate.`);
      }
    }
    this.material = Object.freeze(resolveMaterial(options.material));
    const { lambdaPa, muPa } = lameParameters(this.material);
    this.lambdaPa = lambdaPa;
    this.muPa = muPa;
    this.timeStepS = options.timeStepS ?? 0.02;
    if (!Number.isFinite(this.timeStepS) || this.timeStepS <= 0) {
      throw new FemInputError(`The time step must be a positive number of seconds.`);
    }
    this.pcgOptions = {
      relativeTolerance: options.relativeTolerance ?? 1e-6,
      maxIterations: options.maxIterations ?? 2000,
    };
    if (!(this.pcgOptions.relativeTolerance > 0 && this.pcgOptions.relativeTolerance < 1)) {
      throw new FemInputError('The relative tolerance must lie strictly between 0 and 1.');
    }
    if (!Number.isInteger(this.pcgOptions.maxIterations) || this.pcgOptions.maxIterations < 1) {
      throw new FemInputError('The iteration cap must be a positive integer.');
    }
    if (!['corotational', 'linear'].includes(options.rotation ?? 'corotational')) {
      throw new FemInputError(`Unknown rotation mode ${String(options.rotation)}.`);
    }
    if (!['incomplete-cholesky', 'jacobi'].includes(options.preconditioner ?? 'jacobi')) {
      throw new FemInputError(`Unknown preconditioner ${String(options.preconditioner)}.`);
    }
    this.isCorotational = (options.rotation ?? 'corotational') === 'corotational';

    this.nodeCount = nodes.length / 3;
    const dofCount = nodes.length;
    this.restPositionsM = new Float64Array(dofCount);
    for (let index = 0; index < dofCount; index++) {
      this.restPositionsM[index] = nodes[index] * METRES_PER_MILLIMETRE;
    }
    this.positionsM = this.restPositionsM.slice();
    this.velocitiesMPerS = new Float64Array(dofCount);
    this.tets = tets.slice();
    const rest = tetRestData(this.restPositionsM, this.tets);
    this.restInverse = rest.restInverse;
    this.volumes = rest.volumes;
    this.pattern = buildBlockPattern(this.nodeCount, this.tets);
    const orphan = this.pattern.diagonalSlot.indexOf(-1);
    if (orphan >= 0) {
      throw new FemInputError(`Mesh node ${orphan} belongs to no tetrahedron (it has no mass).`);
    }
    this.massKg = new Float64Array(this.nodeCount);
    for (let tet = 0; tet < this.volumes.length; tet++) {
      const share = (this.material.densityKgPerM3 * this.volumes[tet]) / 4;
      for (let corner = 0; corner < 4; corner++) this.massKg[this.tets[4 * tet + corner]] += share;
    }
    this.stiffness = new Float64Array(9 * this.pattern.columns.length);
    this.elasticForces = new Float64Array(dofCount);
    this.constrained = new Uint8Array(dofCount);
    this.attachmentStiffness = new Float64Array(dofCount);
    this.systemDiagonal = new Float64Array(dofCount);
    this.inverseDiagonal = new Float64Array(dofCount);
    this.cholesky =
      (options.preconditioner ?? 'incomplete-cholesky') === 'incomplete-cholesky'
        ? new IncompleteCholesky(this.pattern)
        : null;
    this.work = new PcgWorkspace(dofCount);
    this.rhs = new Float64Array(dofCount);
    this.known = new Float64Array(dofCount);
    this.product = new Float64Array(dofCount);
    this.solution = new Float64Array(dofCount);
    this.previousFreeChange = new Float64Array(dofCount);
    this.setBoundary(options.boundary ?? {});
  }

  /** Simulated time, s (0 at construction). */
  get timeS(): number {
    return this.time;
  }

  /** 1 for each degree of freedom (3·node + axis) that is fixed or driven, else 0 (a copy). */
  constrainedDofs(): Uint8Array {
    return this.constrained.slice();
  }

  /**
   * Replaces the boundary conditions (from the next step on). Ends the current step's system:
   * call freeMotion() again before solveSystem().
   */
  setBoundary(boundary: BoundaryConditions): void {
    const dofCount = 3 * this.nodeCount;
    const constrained = new Uint8Array(dofCount);
    const isDriven = new Uint8Array(dofCount);
    const checkNode = (node: number, what: string): void => {
      if (!Number.isInteger(node) || node < 0 || node >= this.nodeCount) {
        throw new FemInputError(`${what} names node ${node}; the mesh has ${this.nodeCount}.`);
      }
    };
    const checkAxes = (axes: readonly Axis[] | undefined, what: string): readonly Axis[] => {
      if (axes === undefined) return ALL_AXES;
      if (axes.length === 0 || axes.some((axis) => axis !== 0 && axis !== 1 && axis !== 2)) {
        throw new FemInputError(`${what} has axes ${JSON.stringify(axes)}; use 0, 1 or 2.`);
      }
      return axes;
    };
    for (const fixed of boundary.fixed ?? []) {
      checkNode(fixed.node, 'A fixed node');
      for (const axis of checkAxes(fixed.axes, `Fixed node ${fixed.node}`)) {
        constrained[3 * fixed.node + axis] = 1;
      }
    }
    const driven: DrivenEntry[] = [];
    for (const entry of boundary.driven ?? []) {
      checkNode(entry.node, 'A driven node');
      if (typeof entry.positionM !== 'function') {
        throw new FemInputError(`Driven node ${entry.node} needs a position function of time.`);
      }
      const axes = checkAxes(entry.axes, `Driven node ${entry.node}`);
      for (const axis of axes) {
        const dof = 3 * entry.node + axis;
        if (constrained[dof] === 1) {
          throw new FemInputError(
            `Node ${entry.node} axis ${axis} is ${isDriven[dof] ? 'driven twice' : 'both fixed and driven'}.`,
          );
        }
        constrained[dof] = 1;
        isDriven[dof] = 1;
      }
      driven.push({ node: entry.node, axes, positionM: entry.positionM });
    }
    const attachments: AttachmentEntry[] = [];
    const attachmentStiffness = new Float64Array(dofCount);
    for (const entry of boundary.attachments ?? []) {
      checkNode(entry.node, 'A soft attachment');
      if (!Number.isFinite(entry.stiffnessNPerM) || entry.stiffnessNPerM < 0) {
        throw new FemInputError(
          `Soft attachment of node ${entry.node} needs a stiffness ≥ 0 N/m (got ${entry.stiffnessNPerM}).`,
        );
      }
      const target = entry.targetM;
      let targetM: (timeS: number) => PointM;
      if (typeof target === 'function') {
        targetM = target;
      } else {
        if (target.length !== 3 || !target.every(Number.isFinite)) {
          throw new FemInputError(`Soft attachment of node ${entry.node} has a bad target.`);
        }
        const fixedTarget: PointM = [target[0], target[1], target[2]];
        targetM = () => fixedTarget;
      }
      attachments.push({ node: entry.node, stiffnessNPerM: entry.stiffnessNPerM, targetM });
      for (let axis = 0; axis < 3; axis++) {
        attachmentStiffness[3 * entry.node + axis] += entry.stiffnessNPerM;
      }
    }
    this.constrained = constrained;
    this.driven = driven;
    this.attachments = attachments;
    this.attachmentStiffness = attachmentStiffness;
    this.isSystemReady = false;
  }

  /**
   * Constant external forces, N, 3 per node (gravity: massKg·g per node), or null for none.
   * Copied. They act on free degrees of freedom only.
   */
  setExternalForces(forcesN: Float64Array | null): void {
    if (forcesN === null) {
      this.externalForces = null;
      return;
    }
    this.checkVector(forcesN, 'External forces');
    this.externalForces = forcesN.slice();
  }

  /**
   * Sets positions (m), velocities (m/s) and/or time (s). Ends the current step's system.
   * Fixed nodes stay where this puts them.
   */
  setState(state: { positionsM?: Float64Array; velocitiesMPerS?: Float64Array; timeS?: number }) {
    if (state.positionsM) this.checkVector(state.positionsM, 'Positions');
    if (state.velocitiesMPerS) this.checkVector(state.velocitiesMPerS, 'Velocities');
    if (state.timeS !== undefined && !Number.isFinite(state.timeS)) {
      throw new FemInputError('The time must be a finite number of seconds.');
    }
    if (state.positionsM) this.positionsM.set(state.positionsM);
    if (state.velocitiesMPerS) this.velocitiesMPerS.set(state.velocitiesMPerS);
    if (state.timeS !== undefined) this.time = state.timeS;
    this.isSystemReady = false;
  }

  /**
   * Everything the next step depends on: positions, velocities, time and the conjugate
   * gradients' starting guess (the last free velocity change). `restore` puts it back, so a
   * step redone from a snapshot costs what the first one did and gives the same result.
   */
  snapshot(): TissueSolverSnapshot {
    return {
      positionsM: this.positionsM.slice(),
      velocitiesMPerS: this.velocitiesMPerS.slice(),
      timeS: this.time,
      freeChange: this.previousFreeChange.slice(),
    };
  }

  restore(snapshot: TissueSolverSnapshot): void {
    this.setState(snapshot);
    this.checkVector(snapshot.freeChange, 'The starting guess');
    this.previousFreeChange.set(snapshot.freeChange);
  }

  /** One step without constraint forces: the same as freeMotion(). */
  step(): StepReport {
    return this.freeMotion();
  }

  /**
   * Advances from t to t + h without constraint forces (backward Euler, linearised at the
   * current state; README). Leaves the step's system A = M + h·C + h²·K in place for
   * solveSystem() and applyCorrection() until the next freeMotion(), setBoundary(), setState()
   * or solveStatic(). If the conjugate-gradient solve stops at its iteration cap, its last
   * iterate is used and the report says `converged: false`. Throws FemNumericalError, leaving
   * the state unchanged, if the result is not finite.
   */
  freeMotion(): StepReport {
    const h = this.timeStepS;
    const t1 = this.time + h;
    const { massDampingPerS: alpha, stiffnessDampingS: beta } = this.material;
    const x = this.positionsM;
    const v = this.velocitiesMPerS;
    const n = x.length;
    this.isSystemReady = false;
    this.assemble(true);

    // Forces at x_n with the attachment targets at t_{n+1} (the implicit end of the step).
    const force = this.rhs;
    this.totalForces(t1, force);
    blockMultiply(this.pattern, this.stiffness, v, this.product);
    const kAttach = this.attachmentStiffness;
    for (let dof = 0; dof < n; dof++) {
      const mass = this.massKg[(dof / 3) | 0];
      // b = h·(f − C·v − h·K·v), C = α·M + β·K_elastic, K = K_elastic + K_attachment.
      force[dof] =
        h *
        (force[dof] -
          alpha * mass * v[dof] -
          (beta + h) * this.product[dof] -
          h * kAttach[dof] * v[dof]);
    }

    // Known velocity changes of fixed and driven degrees of freedom, moved to the right side.
    const known = this.known;
    known.fill(0);
    for (let dof = 0; dof < n; dof++) if (this.constrained[dof]) known[dof] = -v[dof];
    for (const entry of this.driven) {
      const target = this.drivenPosition(entry, t1);
      for (const axis of entry.axes) {
        const dof = 3 * entry.node + axis;
        known[dof] = (target[axis] - x[dof]) / h - v[dof];
      }
    }
    // A = (1 + h·α)·M + h²·K_attachment + (h·β + h²)·K_elastic.
    this.prepareSystem(1 + h * alpha, h * h, h * beta + h * h);
    this.applySystem(known, this.product);
    for (let dof = 0; dof < n; dof++) force[dof] -= this.product[dof];
    // Start from the last step's free velocity change: under slow driving it changes little.
    const dv = this.solution;
    dv.set(this.previousFreeChange);
    const solve = this.solveFree(force, dv, true);
    this.previousFreeChange.set(dv);
    for (let dof = 0; dof < n; dof++) {
      dv[dof] += known[dof];
      if (!Number.isFinite(dv[dof])) {
        this.isSystemReady = false;
        throw new FemNumericalError(
          `The step to t = ${t1} s gave a non-finite velocity at node ${(dof / 3) | 0}; ` +
            'the state was kept. A smaller time step or a better mesh may help.',
        );
      }
    }
    for (let dof = 0; dof < n; dof++) {
      v[dof] += dv[dof];
      x[dof] += h * v[dof];
    }
    // Driven degrees of freedom end exactly on their function (no rounding drift).
    for (const entry of this.driven) {
      const target = this.drivenPosition(entry, t1);
      for (const axis of entry.axes) x[3 * entry.node + axis] = target[axis];
    }
    this.time = t1;
    return { timeS: t1, solve };
  }

  /**
   * out = A⁻¹·rhs for the current step's A = M + h·C + h²·K with its boundary conditions: fixed
   * and driven degrees of freedom are eliminated (out is 0 there, rhs is ignored there). An
   * impulse p (N·s, 3 per node) applied during the step changes the velocities by A⁻¹·p, so with
   * rhs = Hᵀ·p for constraint rows H, out is that change, and W = H·A⁻¹·Hᵀ maps constraint
   * impulses to constraint velocities (m/s per N·s); a force f_c held through the step is the
   * impulse h·f_c. Needs freeMotion() first. The caller owns out; the solve starts from zero.
   */
  solveSystem(rhs: Float64Array, out: Float64Array): PcgReport {
    if (!this.isSystemReady) {
      throw new FemInputError('solveSystem() needs the system of a step: call freeMotion().');
    }
    this.checkVector(rhs, 'The right-hand side');
    if (out.length !== rhs.length) throw new FemInputError('out must have 3 numbers per node.');
    return this.solveFree(rhs, out, false);
  }

  /**
   * Adds a velocity correction dv (m/s, 3 per node) to the step just taken and moves the
   * positions with it, x += h·dv, so that x_{n+1} = x_n + h·v_{n+1} still holds. Fixed and
   * driven degrees of freedom ignore it. May be called more than once per step.
   */
  applyCorrection(dv: Float64Array): void {
    if (!this.isSystemReady) {
      throw new FemInputError('applyCorrection() belongs to a step: call freeMotion() first.');
    }
    this.checkVector(dv, 'The velocity correction');
    const h = this.timeStepS;
    for (let dof = 0; dof < dv.length; dof++) {
      if (this.constrained[dof]) continue;
      this.velocitiesMPerS[dof] += dv[dof];
      this.positionsM[dof] += h * dv[dof];
    }
  }

  /**
   * Moves the free nodes to static equilibrium at the current time (driven nodes at their
   * function's value, attachments at their targets, external forces on), by repeated linear
   * solves K(x)·δ = f(x) with the corotational stiffness, until the largest |δ| ≤
   * toleranceM. Velocities are set to zero. Needs at least one fixed, driven or attached node.
   */
  solveStatic(options: { toleranceM?: number; maxIterations?: number } = {}): StaticReport {
    const toleranceM = options.toleranceM ?? 1e-9;
    const maxIterations = options.maxIterations ?? 30;
    if (!(toleranceM > 0) || !Number.isInteger(maxIterations) || maxIterations < 1) {
      throw new FemInputError('solveStatic needs toleranceM > 0 and a positive iteration cap.');
    }
    if (this.constrained.indexOf(1) < 0 && !this.attachments.some((a) => a.stiffnessNPerM > 0)) {
      throw new FemInputError(
        'A static solve needs supports (a fixed, driven or attached node): a free body has none.',
      );
    }
    const x = this.positionsM;
    const n = x.length;
    const start = x.slice();
    this.isSystemReady = false;
    try {
      let pcgIterations = 0;
      let lastUpdateM = Infinity;
      for (let iteration = 1; iteration <= maxIterations; iteration++) {
        for (const entry of this.driven) {
          const target = this.drivenPosition(entry, this.time);
          for (const axis of entry.axes) x[3 * entry.node + axis] = target[axis];
        }
        this.assemble(true);
        this.totalForces(this.time, this.rhs);
        this.prepareSystem(0, 1, 1);
        this.isSystemReady = false;
        const solve = this.solveFree(this.rhs, this.solution, false);
        pcgIterations += solve.iterations;
        lastUpdateM = 0;
        for (let dof = 0; dof < n; dof++) {
          const update = this.solution[dof];
          if (!Number.isFinite(update)) {
            throw new FemNumericalError(
              'The static solve gave a non-finite position; are the supports enough to hold the body?',
            );
          }
          lastUpdateM = Math.max(lastUpdateM, Math.abs(update));
        }
        for (let dof = 0; dof < n; dof++) x[dof] += this.solution[dof];
        if (lastUpdateM <= toleranceM) {
          this.velocitiesMPerS.fill(0);
          return { iterations: iteration, pcgIterations, lastUpdateM, converged: true };
        }
      }
      this.velocitiesMPerS.fill(0);
      return { iterations: maxIterations, pcgIterations, lastUpdateM, converged: false };
    } catch (error) {
      // Bad input or a numerical failure mid-way: put the positions back as they were.
      x.set(start);
      throw error;
    }
  }

  /**
   * Nodal forces of the current state, N, into out (3 per node): elastic −Σ R·Ke·(Rᵀ·x − x0),
   * plus the soft attachments (targets at the current time), plus the external forces. No
   * damping. On fixed and driven degrees of freedom the negative of this is the support's
   * reaction at equilibrium.
   */
  forces(out: Float64Array): void {
    if (out.length !== 3 * this.nodeCount) throw new FemInputError('out must have 3 per node.');
    this.assemble(false);
    this.totalForces(this.time, out);
  }

  /** Kinetic, elastic and attachment energy of the current state, J. */
  energy(): EnergyReport {
    let kineticJ = 0;
    for (let dof = 0; dof < this.velocitiesMPerS.length; dof++) {
      const speed = this.velocitiesMPerS[dof];
      kineticJ += 0.5 * this.massKg[(dof / 3) | 0] * speed * speed;
    }
    const elasticJ = this.assemble(false);
    let attachmentJ = 0;
    for (const entry of this.attachments) {
      const target = entry.targetM(this.time);
      for (let axis = 0; axis < 3; axis++) {
        const gap = target[axis] - this.positionsM[3 * entry.node + axis];
        attachmentJ += 0.5 * entry.stiffnessNPerM * gap * gap;
      }
    }
    return { kineticJ, elasticJ, attachmentJ };
  }

  /**
   * Elastic forces into this.elasticForces and, if asked, the tangent stiffness Σ R·Ke·Rᵀ into
   * this.stiffness, at the current positions; returns the elastic energy, J.
   *
   * Per tet, with F = Ds·Dm⁻¹ and R its rotation: the corotated displacement gradient is
   * RᵀF − I, the strain ε = sym(RᵀF) − I and the stress σ = λ·tr ε·I + 2μ·ε. Then
   * Ke·(Rᵀx − x0) at corner a is V·σ·g_a (g_a = ∇N_a; Ke annihilates the translation in
   * Rᵀx − x0), so the corner force −R·Ke·(Rᵀx − x0) is −V·R·σ·g_a: the Müller & Gross force
   * without forming the 12×12 product.
   */
  private assemble(withStiffness: boolean): number {
    const tets = this.tets;
    const x = this.positionsM;
    const restInverse = this.restInverse;
    const forces = this.elasticForces;
    const stiffness = this.stiffness;
    const slots = this.pattern.tetSlots;
    const f = this.f;
    const r = this.r;
    const gr = this.rotatedGradients;
    const lambda = this.lambdaPa;
    const mu = this.muPa;
    forces.fill(0);
    if (withStiffness) stiffness.fill(0);
    let energy = 0;
    const tetCount = this.volumes.length;
    for (let tet = 0; tet < tetCount; tet++) {
      const i0 = 3 * tets[4 * tet];
      const i1 = 3 * tets[4 * tet + 1];
      const i2 = 3 * tets[4 * tet + 2];
      const i3 = 3 * tets[4 * tet + 3];
      const m = 9 * tet;
      // Rows of Dm⁻¹ are the gradients g1, g2, g3.
      const g10 = restInverse[m];
      const g11 = restInverse[m + 1];
      const g12 = restInverse[m + 2];
      const g20 = restInverse[m + 3];
      const g21 = restInverse[m + 4];
      const g22 = restInverse[m + 5];
      const g30 = restInverse[m + 6];
      const g31 = restInverse[m + 7];
      const g32 = restInverse[m + 8];
      // F = Σ_k (x_k − x_0) ⊗ g_k.
      for (let i = 0; i < 3; i++) {
        const e1 = x[i1 + i] - x[i0 + i];
        const e2 = x[i2 + i] - x[i0 + i];
        const e3 = x[i3 + i] - x[i0 + i];
        f[3 * i] = e1 * g10 + e2 * g20 + e3 * g30;
        f[3 * i + 1] = e1 * g11 + e2 * g21 + e3 * g31;
        f[3 * i + 2] = e1 * g12 + e2 * g22 + e3 * g32;
      }
      if (this.isCorotational) {
        rotationOfDeformation(f, r);
      } else {
        r.fill(0);
        r[0] = r[4] = r[8] = 1;
      }
      // P = Rᵀ·F; ε = sym(P) − I; σ = λ·tr ε·I + 2μ·ε.
      const p00 = r[0] * f[0] + r[3] * f[3] + r[6] * f[6];
      const p01 = r[0] * f[1] + r[3] * f[4] + r[6] * f[7];
      const p02 = r[0] * f[2] + r[3] * f[5] + r[6] * f[8];
      const p10 = r[1] * f[0] + r[4] * f[3] + r[7] * f[6];
      const p11 = r[1] * f[1] + r[4] * f[4] + r[7] * f[7];
      const p12 = r[1] * f[2] + r[4] * f[5] + r[7] * f[8];
      const p20 = r[2] * f[0] + r[5] * f[3] + r[8] * f[6];
      const p21 = r[2] * f[1] + r[5] * f[4] + r[8] * f[7];
      const p22 = r[2] * f[2] + r[5] * f[5] + r[8] * f[8];
      const e00 = p00 - 1;
      const e11 = p11 - 1;
      const e22 = p22 - 1;
      const e01 = 0.5 * (p01 + p10);
      const e02 = 0.5 * (p02 + p20);
      const e12 = 0.5 * (p12 + p21);
      const volume = this.volumes[tet];
      const trace = lambda * (e00 + e11 + e22);
      const s00 = trace + 2 * mu * e00;
      const s11 = trace + 2 * mu * e11;
      const s22 = trace + 2 * mu * e22;
      const s01 = 2 * mu * e01;
      const s02 = 2 * mu * e02;
      const s12 = 2 * mu * e12;
      energy +=
        0.5 *
        volume *
        (s00 * e00 + s11 * e11 + s22 * e22 + 2 * (s01 * e01 + s02 * e02 + s12 * e12));
      // w_k = −V·σ·g_k in the element frame; the corner force is R·w_k; corner 0 balances.
      let f00 = 0;
      let f01 = 0;
      let f02 = 0;
      for (let k = 1; k <= 3; k++) {
        const ga = k === 1 ? g10 : k === 2 ? g20 : g30;
        const gb = k === 1 ? g11 : k === 2 ? g21 : g31;
        const gc = k === 1 ? g12 : k === 2 ? g22 : g32;
        const w0 = -volume * (s00 * ga + s01 * gb + s02 * gc);
        const w1 = -volume * (s01 * ga + s11 * gb + s12 * gc);
        const w2 = -volume * (s02 * ga + s12 * gb + s22 * gc);
        const fx = r[0] * w0 + r[1] * w1 + r[2] * w2;
        const fy = r[3] * w0 + r[4] * w1 + r[5] * w2;
        const fz = r[6] * w0 + r[7] * w1 + r[8] * w2;
        const ik = k === 1 ? i1 : k === 2 ? i2 : i3;
        forces[ik] += fx;
        forces[ik + 1] += fy;
        forces[ik + 2] += fz;
        f00 += fx;
        f01 += fy;
        f02 += fz;
        if (withStiffness) {
          gr[3 * k] = r[0] * ga + r[1] * gb + r[2] * gc;
          gr[3 * k + 1] = r[3] * ga + r[4] * gb + r[5] * gc;
          gr[3 * k + 2] = r[6] * ga + r[7] * gb + r[8] * gc;
        }
      }
      forces[i0] -= f00;
      forces[i0 + 1] -= f01;
      forces[i0 + 2] -= f02;
      if (!withStiffness) continue;
      // Tangent R·Ke·Rᵀ: block (a, b) = V·(λ·g̃_a·g̃_bᵀ + μ·g̃_b·g̃_aᵀ + μ·(g̃_a·g̃_b)·I),
      // g̃ = R·g; block (b, a) is its transpose.
      gr[0] = -(gr[3] + gr[6] + gr[9]);
      gr[1] = -(gr[4] + gr[7] + gr[10]);
      gr[2] = -(gr[5] + gr[8] + gr[11]);
      const vl = volume * lambda;
      const vm = volume * mu;
      const slotBase = 16 * tet;
      for (let a = 0; a < 4; a++) {
        const a0 = gr[3 * a];
        const a1 = gr[3 * a + 1];
        const a2 = gr[3 * a + 2];
        for (let b = a; b < 4; b++) {
          const b0 = gr[3 * b];
          const b1 = gr[3 * b + 1];
          const b2 = gr[3 * b + 2];
          const diagonal = vm * (a0 * b0 + a1 * b1 + a2 * b2);
          const k00 = vl * a0 * b0 + vm * b0 * a0 + diagonal;
          const k01 = vl * a0 * b1 + vm * b0 * a1;
          const k02 = vl * a0 * b2 + vm * b0 * a2;
          const k10 = vl * a1 * b0 + vm * b1 * a0;
          const k11 = vl * a1 * b1 + vm * b1 * a1 + diagonal;
          const k12 = vl * a1 * b2 + vm * b1 * a2;
          const k20 = vl * a2 * b0 + vm * b2 * a0;
          const k21 = vl * a2 * b1 + vm * b2 * a1;
          const k22 = vl * a2 * b2 + vm * b2 * a2 + diagonal;
          let s = 9 * slots[slotBase + 4 * a + b];
          stiffness[s] += k00;
          stiffness[s + 1] += k01;
          stiffness[s + 2] += k02;
          stiffness[s + 3] += k10;
          stiffness[s + 4] += k11;
          stiffness[s + 5] += k12;
          stiffness[s + 6] += k20;
          stiffness[s + 7] += k21;
          stiffness[s + 8] += k22;
          if (a === b) continue;
          s = 9 * slots[slotBase + 4 * b + a];
          stiffness[s] += k00;
          stiffness[s + 1] += k10;
          stiffness[s + 2] += k20;
          stiffness[s + 3] += k01;
          stiffness[s + 4] += k11;
          stiffness[s + 5] += k21;
          stiffness[s + 6] += k02;
          stiffness[s + 7] += k12;
          stiffness[s + 8] += k22;
        }
      }
    }
    return energy;
  }

  /** out = elastic forces (last assembly) + attachments (targets at timeS) + external. */
  private totalForces(timeS: number, out: Float64Array): void {
    out.set(this.elasticForces);
    if (this.externalForces) {
      for (let dof = 0; dof < out.length; dof++) out[dof] += this.externalForces[dof];
    }
    for (const entry of this.attachments) {
      const target = entry.targetM(timeS);
      for (let axis = 0; axis < 3; axis++) {
        if (!Number.isFinite(target[axis])) {
          throw new FemInputError(
            `The target of node ${entry.node}'s soft attachment is not finite at t = ${timeS} s.`,
          );
        }
        const dof = 3 * entry.node + axis;
        out[dof] += entry.stiffnessNPerM * (target[axis] - this.positionsM[dof]);
      }
    }
  }

  /**
   * Sets the system A = massScale·M + attachmentScale·K_attachment + stiffnessScale·K_elastic
   * (K_elastic from the last assembly) and its Jacobi preconditioner on the free unknowns.
   */
  private prepareSystem(massScale: number, attachmentScale: number, stiffnessScale: number) {
    const n = this.systemDiagonal.length;
    const { diagonalSlot } = this.pattern;
    for (let dof = 0; dof < n; dof++) {
      const node = (dof / 3) | 0;
      const diagonal =
        massScale * this.massKg[node] + attachmentScale * this.attachmentStiffness[dof];
      this.systemDiagonal[dof] = diagonal;
      const fullDiagonal =
        diagonal + stiffnessScale * this.stiffness[9 * diagonalSlot[node] + 4 * (dof % 3)];
      this.inverseDiagonal[dof] = this.constrained[dof] ? 0 : 1 / fullDiagonal;
    }
    // If even a shifted IC(0) fails the matrix is not positive definite; Jacobi then lets CG
    // report it rather than failing here.
    this.isCholeskyReady =
      this.cholesky?.factor(
        this.stiffness,
        stiffnessScale,
        this.systemDiagonal,
        this.constrained,
      ) ?? false;
    this.systemStiffnessScale = stiffnessScale;
    this.isSystemReady = true;
  }

  /** PCG on the free unknowns of the system set by prepareSystem. */
  private solveFree(b: Float64Array, y: Float64Array, isWarmStart: boolean): PcgReport {
    const precondition = this.isCholeskyReady
      ? (r: Float64Array, z: Float64Array) => this.cholesky?.solve(r, z)
      : (r: Float64Array, z: Float64Array) => {
          for (let dof = 0; dof < r.length; dof++) z[dof] = this.inverseDiagonal[dof] * r[dof];
        };
    return projectedPcg(
      (vector, out) => this.applySystem(vector, out),
      precondition,
      this.constrained,
      b,
      y,
      this.pcgOptions,
      this.work,
      isWarmStart,
    );
  }

  /** out = A·vector for the system set by prepareSystem. */
  private applySystem(vector: Float64Array, out: Float64Array): void {
    blockMultiply(this.pattern, this.stiffness, vector, out);
    const scale = this.systemStiffnessScale;
    for (let dof = 0; dof < out.length; dof++) {
      out[dof] = this.systemDiagonal[dof] * vector[dof] + scale * out[dof];
    }
  }

  private drivenPosition(entry: DrivenEntry, timeS: number): PointM {
    const target = entry.positionM(timeS);
    for (const axis of entry.axes) {
      if (!Number.isFinite(target[axis])) {
        throw new FemInputError(
          `Driven node ${entry.node} has no finite position on axis ${axis} at t = ${timeS} s.`,
        );
      }
    }
    return target;
  }

  private checkVector(vector: Float64Array, what: string): void {
    if (!(vector instanceof Float64Array) || vector.length !== 3 * this.nodeCount) {
      throw new FemInputError(`${what} must be a Float64Array of 3 numbers per node.`);
    }
    for (let index = 0; index < vector.length; index++) {
      if (!Number.isFinite(vector[index])) {
        throw new FemInputError(`${what} has a non-finite value at node ${(index / 3) | 0}.`);
      }
    }
  }
}
