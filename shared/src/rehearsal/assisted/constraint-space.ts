/**
 * The constraint-space solve without the correction, for reading how the tissue would answer a
 * needle command (strategies 'pseudo-constraints' and 'factorised', README.md).
 *
 * With the free motion x* of the step and the needle's rows H (violations c*, preloads p), the
 * impulses solve W·λ + b = 0 with W = H·A⁻¹·Hᵀ, b = c* / h − W·p, under the rows' bounds
 * (projected Gauss–Seidel, ../insertion/constraints.ts). A point embedded by an observation row
 * H_o then ends the step at
 *
 *   x_o = H_o·x* + h·W_o·(λ − p),   W_o = H_o·A⁻¹·Hᵀ,
 *
 * which needs only more entries of the same compliance table: the observation rows take part in
 * the compliance like bilateral rows but carry no impulse. No solve with the tissue's matrix.
 */
import type { Vec3 } from '../../geometry/vector';
import type { Embedding } from '../mesh/embedding';
import {
  exactCompliance,
  gaussSeidelSettings,
  projectedGaussSeidel,
  rowTimes,
  velocityProblem,
  type ConstraintRow,
} from '../insertion/constraints';
import type { InsertionSimulation } from '../insertion/insertion-simulation';
import { observationRows } from './path-objective';

/** A solved constraint-space problem with its observed points. */
export interface ConstraintSpaceSolution {
  rows: readonly ConstraintRow[];
  /** λ per needle row, N·s. */
  impulsesNs: Float64Array;
  /** p per needle row, N·s. */
  preloadNs: Float64Array;
  /** W over the needle rows then the observation rows, row-major (m + o)². */
  compliance: Float64Array;
  /** Needle rows m, observation rows o. */
  rowCount: number;
  observationCount: number;
  /** H_o·x* per observation row, m. */
  observedFreeM: Float64Array;
  /** The observed points at the step's end, LPS mm. */
  observedMm: Vec3[];
  sweeps: number;
}

/** Per-step memory of a controller: the node rotations of the warped compliance. */
export type RotationCache = Map<number, Float64Array>;

/**
 * Solves the needle rows of the step begun in constraint space (no correction) and reads the
 * observed points. Changes nothing in the simulation.
 */
export function solveInConstraintSpace(
  simulation: InsertionSimulation,
  rows: readonly ConstraintRow[],
  observed: readonly Embedding[],
  rotationCache: RotationCache,
): ConstraintSpaceSolution {
  const h = simulation.solver.timeStepS;
  const { maxSweeps, toleranceM, omega } = gaussSeidelSettings(simulation.constraintSolveOptions);
  const observation = observationRows(simulation.mesh, observed);
  const all = [...rows, ...observation];
  const compliance = complianceOf(simulation, all, rotationCache);
  const m = rows.length;
  const o = observation.length;
  const size = m + o;
  const w = new Float64Array(m * m);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) w[i * m + j] = compliance[i * size + j];
  }
  const { preload, b, lambda } = velocityProblem(rows, w, h);
  const { sweeps } =
    m > 0
      ? projectedGaussSeidel(w, b, rows, lambda, maxSweeps, toleranceM / h, omega)
      : { sweeps: 0 };
  const observedFreeM = new Float64Array(o);
  const x = simulation.solver.positionsM;
  for (let k = 0; k < o; k++) observedFreeM[k] = rowTimes(observation[k], x);
  return {
    rows,
    impulsesNs: lambda,
    preloadNs: preload,
    compliance,
    rowCount: m,
    observationCount: o,
    observedFreeM,
    observedMm: observedPoints(compliance, m, o, observedFreeM, lambda, preload, h),
    sweeps,
  };
}

/** x_o = H_o·x* + h·W_o·(λ − p), grouped in threes, LPS mm. */
export function observedPoints(
  compliance: Float64Array,
  m: number,
  o: number,
  observedFreeM: Float64Array,
  lambda: Float64Array,
  preload: Float64Array,
  h: number,
): Vec3[] {
  const size = m + o;
  const points: Vec3[] = [];
  for (let k = 0; k < o; k += 3) {
    const point: Vec3 = [0, 0, 0];
    for (let a = 0; a < 3; a++) {
      const row = (m + k + a) * size;
      let velocity = 0;
      for (let j = 0; j < m; j++) velocity += compliance[row + j] * (lambda[j] - preload[j]);
      point[a] = 1000 * (observedFreeM[k + a] + h * velocity);
    }
    points.push(point);
  }
  return points;
}

/** W for the rows: from the simulation's table (warped at the step's start) or exactly. */
function complianceOf(
  simulation: InsertionSimulation,
  rows: readonly ConstraintRow[],
  rotationCache: RotationCache,
): Float64Array {
  if (rows.length === 0) return new Float64Array(0);
  const mode = simulation.constraintSolver.mode;
  if (mode.kind === 'exact') return exactCompliance(simulation.solver, rows).w;
  return mode.table.compliance(
    rows,
    simulation.stepStartPositionsM,
    mode.warp ?? true,
    rotationCache,
  );
}
