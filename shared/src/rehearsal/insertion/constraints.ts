/**
 * The constraint solve of the insertion rehearsal: Lagrange multipliers in constraint space on
 * top of the tissue solver's implicit step (README, "Constraint solve").
 *
 * 1. Free motion: `TissueSolver.freeMotion()` gives (x*, v*) at the end of the step and leaves
 *    the step's matrix A = M + h·C + h²·K in place.
 * 2. Rows: each constraint is a row H_i = w_ik·u_iᵀ over the 4 nodes k of the tet holding a point
 *    (barycentric weights w, unit direction u), with value c_i(x) = u_i·Σ_k w_ik·x_k − r_i and
 *    its violation c_i(x*) after the free motion.
 * 3. Compliance W = H·A⁻¹·Hᵀ (m/s per N·s): exact, one solve per row, or from columns of A₀⁻¹
 *    precomputed at rest and warped by the local rotations (compliance.ts).
 * 4. Impulses λ (N·s) by projected Gauss–Seidel on c(x*) + h·W·λ: bilateral rows unbounded,
 *    contact rows 0 ≤ λ ≤ cap with c ≥ 0 complementary, friction rows |λ| ≤ μ·|λ_normal|.
 * 5. Correction Δv = A⁻¹·Hᵀ·λ, applied by `TissueSolver.applyCorrection`: x += h·Δv, so that
 *    c(x) = c(x*) + h·H·Δv.
 *
 * Nothing here changes the tissue solver until `apply`: a controller may solve the same free
 * motion again with other rows (another needle pose) and apply only the one it keeps.
 */
import { monotonicMs } from '../../assessment/assessment-stages';
import type { TissueSolver } from '../fem/tissue-solver';
import type { PrecomputedCompliance } from './compliance';
import { checkNumber } from './insertion-input';

/** What a row enforces. */
export type ConstraintKind = 'bilateral' | 'contact' | 'friction';

/** One scalar constraint on a point embedded in the mesh. */
export interface ConstraintRow {
  kind: ConstraintKind;
  /** The nodes the point is embedded in (the corners of its tet; a weight may be 0). */
  nodes: readonly [number, number, number, number];
  /** Barycentric weights of the point in those nodes (summing to 1). */
  weights: readonly [number, number, number, number];
  /** Unit direction u of the row in the solver's frame: the row measures u·(Σ w·x). */
  direction: readonly [number, number, number];
  /**
   * c(x*) after the free motion, m. Bilateral and friction rows want c = 0, contact rows c ≥ 0
   * (a contact row's impulse pushes the point along +u).
   */
  violationM: number;
  /** Contact rows: the largest impulse the contact can carry, N·s (default Infinity). */
  maxImpulseNs?: number;
  /** Friction rows: the rows whose impulses are its normal impulse (|λ_n| = their norm). */
  normalRows?: readonly number[];
  /** Friction rows: Coulomb's coefficient μ, |λ| ≤ μ·|λ_n|. */
  frictionCoefficient?: number;
  /**
   * An impulse p already applied along this row during the free motion (as the external force
   * H_iᵀ·p/h), N·s: λ is then the row's total impulse of the step and the correction applies
   * λ − p. Carrying the last step's constraint forces into the free motion keeps c(x*) to what
   * changed in the step (README). Default 0.
   */
  preloadImpulseNs?: number;
  /** A starting guess for the impulse, N·s (default: the preload); clamped to the bounds. */
  initialImpulseNs?: number;
}

/** Settings of the projected Gauss–Seidel iteration and the correction. */
export interface ConstraintSolveOptions {
  /** Largest number of Gauss–Seidel sweeps (default 2000). */
  maxSweeps?: number;
  /**
   * Stop when no row's value moved by more than this in the last sweep, m (default 1e-9; the
   * change of row i is |Δλ_i|·W_ii·h).
   */
  toleranceM?: number;
  /**
   * With precomputed compliance only: at most this many passes that re-solve for the error of
   * the approximate W against the exact correction (one extra solve each; default 3).
   */
  refinementPasses?: number;
  /**
   * Passes stop once no bilateral or contact row is violated by more than this after the
   * correction, m (default 1e-5: far below the mesh's and the images' resolution; what is left
   * is corrected in the next step, as every row is a position constraint).
   */
  refinementToleranceM?: number;
  /**
   * Over-relaxation ω of the Gauss–Seidel step, in (0, 2) (default 1: plain Gauss–Seidel;
   * projected SOR, Mangasarian 1977 — from memory).
   */
  relaxation?: number;
}

/** A solved constraint problem, not yet applied. */
export interface ConstraintSolution {
  rows: readonly ConstraintRow[];
  /** λ per row, N·s. */
  impulsesNs: Float64Array;
  /** Δv = A⁻¹·Hᵀ·(λ − p), m/s, 3 per node (p the rows' preloads, usually 0). */
  velocityCorrection: Float64Array;
  /** c(x* + h·Δv) per row, m: what remains of each violation after the correction. */
  residualM: Float64Array;
  /** The compliance W used (row-major m × m), m/s per N·s. */
  compliance: Float64Array;
  sweeps: number;
  /** Whether the last Gauss–Seidel run met its tolerance. */
  converged: boolean;
  /** Linear solves with the step's matrix (rows for exact W, plus corrections). */
  systemSolves: number;
  /** Wall time: building W, the Gauss–Seidel sweeps, the correction solves, ms. */
  timingMs: { compliance: number; gaussSeidel: number; correction: number };
}

/** Where W comes from. */
export type ComplianceMode =
  | { kind: 'exact' }
  | {
      kind: 'precomputed';
      table: PrecomputedCompliance;
      warp?: boolean;
      /**
       * How the correction Δv = A⁻¹·Hᵀ·(λ − p) is found: 'table' (default) from the table's
       * whole columns, warped like W (no solve; the rows' residuals then match W's), or
       * 'solve', one solve with this step's exact A plus refinement passes (README).
       */
      correction?: 'table' | 'solve';
    };

/**
 * Solves constraint rows against the current step of a TissueSolver (after its freeMotion()).
 */
export class ConstraintSolver {
  constructor(
    readonly solver: TissueSolver,
    readonly mode: ComplianceMode,
  ) {}

  /**
   * Solves the rows against the solver's current free motion; changes nothing in the solver.
   * `rotationPositionsM` are the positions the warped compliance takes its rotations from
   * (default: the solver's current ones; the simulation passes those at the step's start, where
   * the solver linearised A).
   */
  solve(
    rows: readonly ConstraintRow[],
    options: ConstraintSolveOptions = {},
    rotationPositionsM?: Float64Array,
  ): ConstraintSolution {
    const { maxSweeps, toleranceM, omega } = gaussSeidelSettings(options);
    const passes = checkNumber(options.refinementPasses ?? 3, 'refinementPasses', 0, 20);
    const refinementToleranceM = checkNumber(
      options.refinementToleranceM ?? 1e-5,
      'refinementToleranceM',
      0,
      1,
    );
    const solver = this.solver;
    const h = solver.timeStepS;
    const dofCount = 3 * solver.nodeCount;
    const m = rows.length;
    const dv = new Float64Array(dofCount);
    const empty = {
      rows,
      impulsesNs: new Float64Array(0),
      velocityCorrection: dv,
      residualM: new Float64Array(0),
      compliance: new Float64Array(0),
      sweeps: 0,
      converged: true,
      systemSolves: 0,
      timingMs: { compliance: 0, gaussSeidel: 0, correction: 0 },
    };
    if (m === 0) return empty;

    let systemSolves = 0;
    let started = monotonicMs();
    const rotationCache = new Map<number, Float64Array>();
    const rotationPositions = rotationPositionsM ?? solver.positionsM;
    let w: Float64Array;
    let columns: Float64Array[] | null = null;
    if (this.mode.kind === 'exact') {
      ({ w, columns } = exactCompliance(solver, rows));
      systemSolves += m;
    } else {
      w = this.mode.table.compliance(
        rows,
        rotationPositions,
        this.mode.warp ?? true,
        rotationCache,
      );
    }
    const complianceMs = monotonicMs() - started;

    const { preload, b, lambda } = velocityProblem(rows, w, h);
    started = monotonicMs();
    let gs = projectedGaussSeidel(w, b, rows, lambda, maxSweeps, toleranceM / h, omega);
    let gaussSeidelMs = monotonicMs() - started;
    let sweeps = gs.sweeps;

    let correctionMs = 0;
    const rhs = new Float64Array(dofCount);
    const rowVelocity = new Float64Array(m);
    const correct = (): void => {
      const correctionStart = monotonicMs();
      if (columns) {
        dv.fill(0);
        for (let j = 0; j < m; j++) {
          const column = columns[j];
          const lj = lambda[j] - preload[j];
          if (lj !== 0) for (let dof = 0; dof < dofCount; dof++) dv[dof] += lj * column[dof];
        }
      } else if (
        this.mode.kind === 'precomputed' &&
        (this.mode.correction ?? 'table') === 'table'
      ) {
        const change = new Float64Array(m);
        for (let j = 0; j < m; j++) change[j] = lambda[j] - preload[j];
        this.mode.table.correction(
          rows,
          change,
          rotationPositions,
          dv,
          this.mode.warp ?? true,
          rotationCache,
        );
      } else {
        rhs.fill(0);
        for (let j = 0; j < m; j++) addRowTranspose(rows[j], lambda[j] - preload[j], rhs);
        solver.solveSystem(rhs, dv);
        systemSolves++;
      }
      for (let i = 0; i < m; i++) rowVelocity[i] = rowTimes(rows[i], dv);
      correctionMs += monotonicMs() - correctionStart;
    };
    correct();
    // The precomputed W is approximate; the correction above is exact (A of this step). The
    // error e = H·Δv − W·(λ − p) of the approximation at the current λ is fed back: each pass
    // solves W·λ' + b + e = 0 (a fixed-point iteration with W as the approximate inverse).
    for (let pass = 0; columns === null && pass < passes; pass++) {
      const shifted = new Float64Array(m);
      let worstM = 0;
      for (let i = 0; i < m; i++) {
        let wl = 0;
        for (let j = 0; j < m; j++) wl += w[i * m + j] * (lambda[j] - preload[j]);
        shifted[i] = b[i] + rowVelocity[i] - wl;
        const after = rows[i].violationM + h * rowVelocity[i];
        worstM = Math.max(worstM, violationAfter(rows[i], after, lambda[i]));
      }
      if (worstM <= refinementToleranceM) break;
      const gsStart = monotonicMs();
      gs = projectedGaussSeidel(w, shifted, rows, lambda, maxSweeps, toleranceM / h, omega);
      gaussSeidelMs += monotonicMs() - gsStart;
      sweeps += gs.sweeps;
      correct();
    }

    const residualM = new Float64Array(m);
    for (let i = 0; i < m; i++) residualM[i] = rows[i].violationM + h * rowVelocity[i];
    return {
      rows,
      impulsesNs: lambda,
      velocityCorrection: dv,
      residualM,
      compliance: w,
      sweeps,
      converged: gs.converged,
      systemSolves,
      timingMs: {
        compliance: complianceMs,
        gaussSeidel: gaussSeidelMs,
        correction: correctionMs,
      },
    };
  }

  /** Applies a solution to the solver's step: v += Δv, x += h·Δv. */
  apply(solution: ConstraintSolution): void {
    if (solution.rows.length > 0) this.solver.applyCorrection(solution.velocityCorrection);
  }
}

/** The Gauss–Seidel settings of `ConstraintSolveOptions`, checked, with their defaults. */
export function gaussSeidelSettings(options: ConstraintSolveOptions): {
  maxSweeps: number;
  toleranceM: number;
  omega: number;
} {
  return {
    maxSweeps: checkNumber(options.maxSweeps ?? 2000, 'maxSweeps', 1, 1e6),
    toleranceM: checkNumber(options.toleranceM ?? 1e-9, 'toleranceM', 0, 1),
    omega: checkNumber(options.relaxation ?? 1, 'relaxation', 0.01, 1.99),
  };
}

/**
 * The velocity-level problem of the rows with compliance W (row-major m × m): c(x*) + h·W·(λ − p)
 * = 0 ⇔ W·λ + b = 0 with b = c* / h − W·p (p the preload already in the free motion), and the
 * starting impulses (each row's guess, else its preload).
 */
export function velocityProblem(
  rows: readonly ConstraintRow[],
  w: Float64Array,
  h: number,
): { preload: Float64Array; b: Float64Array; lambda: Float64Array } {
  const m = rows.length;
  const preload = new Float64Array(m);
  for (let i = 0; i < m; i++) preload[i] = rows[i].preloadImpulseNs ?? 0;
  const b = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    let wp = 0;
    for (let j = 0; j < m; j++) wp += w[i * m + j] * preload[j];
    b[i] = rows[i].violationM / h - wp;
  }
  const lambda = new Float64Array(m);
  for (let i = 0; i < m; i++) lambda[i] = rows[i].initialImpulseNs ?? preload[i];
  return { preload, b, lambda };
}

/** How far a row with value c (m) after the correction is from satisfied, m (0 when it is). */
function violationAfter(row: ConstraintRow, c: number, lambda: number): number {
  if (row.kind === 'bilateral') return Math.abs(c);
  if (row.kind === 'contact') {
    // Complementarity: c ≥ 0, and c = 0 where the contact pushes below its cap.
    if (c < 0) return lambda >= (row.maxImpulseNs ?? Infinity) ? 0 : -c;
    return lambda > 0 ? c : 0;
  }
  return 0; // friction rows are judged by the Gauss–Seidel bound, not by a value
}

/** u·Σ w_k·v_k: the row applied to a vector of 3 per node. */
export function rowTimes(row: ConstraintRow, vector: Float64Array): number {
  let sum = 0;
  const [ux, uy, uz] = row.direction;
  for (let corner = 0; corner < 4; corner++) {
    const weight = row.weights[corner];
    if (weight === 0) continue;
    const base = 3 * row.nodes[corner];
    sum += weight * (ux * vector[base] + uy * vector[base + 1] + uz * vector[base + 2]);
  }
  return sum;
}

/** out += scale·H_rowᵀ. */
export function addRowTranspose(row: ConstraintRow, scale: number, out: Float64Array): void {
  if (scale === 0) return;
  const [ux, uy, uz] = row.direction;
  for (let corner = 0; corner < 4; corner++) {
    const weight = scale * row.weights[corner];
    if (weight === 0) continue;
    const base = 3 * row.nodes[corner];
    out[base] += weight * ux;
    out[base + 1] += weight * uy;
    out[base + 2] += weight * uz;
  }
}

/**
 * W = H·A⁻¹·Hᵀ exactly (up to the solver's CG tolerance): one solveSystem per row. Returns W
 * and the columns A⁻¹·H_jᵀ, from which Δv = Σ λ_j·column_j needs no further solve.
 */
export function exactCompliance(
  solver: TissueSolver,
  rows: readonly ConstraintRow[],
): { w: Float64Array; columns: Float64Array[] } {
  const m = rows.length;
  const dofCount = 3 * solver.nodeCount;
  const w = new Float64Array(m * m);
  const columns: Float64Array[] = [];
  const rhs = new Float64Array(dofCount);
  for (let j = 0; j < m; j++) {
    rhs.fill(0);
    addRowTranspose(rows[j], 1, rhs);
    const column = new Float64Array(dofCount);
    solver.solveSystem(rhs, column);
    columns.push(column);
    for (let i = 0; i < m; i++) w[i * m + j] = rowTimes(rows[i], column);
  }
  // Symmetric in exact arithmetic; average away the CG tolerance's asymmetry.
  for (let i = 0; i < m; i++) {
    for (let j = i + 1; j < m; j++) {
      const mean = 0.5 * (w[i * m + j] + w[j * m + i]);
      w[i * m + j] = mean;
      w[j * m + i] = mean;
    }
  }
  return { w, columns };
}

/**
 * Projected Gauss–Seidel on W·λ + b (velocity level): row by row,
 * λ_i ← proj_i(λ_i − (b_i + Σ_j W_ij·λ_j)/W_ii), with proj the row's bounds: none for bilateral
 * rows, [0, cap] for contacts, [−μ·|λ_n|, μ·|λ_n|] for friction, |λ_n| from the current normal
 * impulses (Jean & Moreau's nonsmooth contact dynamics; the projected iteration is the one of
 * Cottle, Pang & Stone, The Linear Complementarity Problem, 1992 — from memory). λ is updated in
 * place from its starting value. Rows whose W_ii is 0 (all nodes fixed or driven) carry nothing.
 * Stops when the largest |Δλ_i|·W_ii of a sweep is at most `toleranceVelocity`.
 */
export function projectedGaussSeidel(
  w: Float64Array,
  b: Float64Array,
  rows: readonly ConstraintRow[],
  lambda: Float64Array,
  maxSweeps: number,
  toleranceVelocity: number,
  relaxation = 1,
): { sweeps: number; converged: boolean } {
  const m = b.length;
  const project = (i: number, value: number): number => {
    const row = rows[i];
    if (row.kind === 'bilateral') return value;
    if (row.kind === 'contact') return Math.min(Math.max(value, 0), row.maxImpulseNs ?? Infinity);
    let normal = 0;
    for (const k of row.normalRows ?? []) normal += lambda[k] * lambda[k];
    const bound = (row.frictionCoefficient ?? 0) * Math.sqrt(normal);
    return Math.min(Math.max(value, -bound), bound);
  };
  for (let i = 0; i < m; i++) lambda[i] = w[i * m + i] > 0 ? project(i, lambda[i]) : 0;
  for (let sweep = 1; sweep <= maxSweeps; sweep++) {
    let largest = 0;
    for (let i = 0; i < m; i++) {
      const wii = w[i * m + i];
      if (!(wii > 0)) continue;
      let velocity = b[i];
      const offset = i * m;
      for (let j = 0; j < m; j++) velocity += w[offset + j] * lambda[j];
      const next = project(i, lambda[i] - (relaxation * velocity) / wii);
      largest = Math.max(largest, Math.abs(next - lambda[i]) * wii);
      lambda[i] = next;
    }
    if (largest <= toleranceVelocity) return { sweeps: sweep, converged: true };
  }
  return { sweeps: maxSweeps, converged: false };
}
