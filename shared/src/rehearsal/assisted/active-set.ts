/**
 * Constraint-space solves with the active set held ("beyond" the pseudo-constraints, README.md).
 *
 * Once Gauss–Seidel has solved the nominal command, its rows split into those inside their
 * bounds (bilateral rows, contacts between 0 and their cap, sticking friction) — the active set
 * A — and those at a bound (a contact let go or at its cap, sliding friction), whose impulses are
 * held. With the set fixed the problem is linear:
 *
 *   W_AA·λ_A = −(b_A + W_AN·λ_N),
 *
 * so a nearby command changes only the right-hand side. W_AA is factorised once (Cholesky, with a
 * ridge of 10⁻¹⁰ of its mean diagonal against rows that are almost dependent) and every
 * perturbation is one forward and back substitution: no Gauss–Seidel sweeps, no new compliance.
 */
import type { Vec3 } from '../../geometry/vector';
import type { ConstraintRow } from '../insertion/constraints';
import { observedPoints, type ConstraintSpaceSolution } from './constraint-space';

/** A factorised nominal solve, ready for nearby right-hand sides. */
export interface ActiveSetFactor {
  nominal: ConstraintSpaceSolution;
  /** Indices of the active rows. */
  active: Int32Array;
  /** Lower-triangular Cholesky factor of W_AA (row-major |A|²). */
  factor: Float64Array;
}

/** Which rows are inside their bounds at λ (relative margin 10⁻⁶). */
function isActive(row: ConstraintRow, i: number, lambda: Float64Array, wii: number): boolean {
  if (!(wii > 0)) return false;
  if (row.kind === 'bilateral') return true;
  if (row.kind === 'contact') {
    const cap = row.maxImpulseNs ?? Infinity;
    return lambda[i] > 0 && lambda[i] < cap * (1 - 1e-6);
  }
  let normal = 0;
  for (const k of row.normalRows ?? []) normal += lambda[k] * lambda[k];
  const bound = (row.frictionCoefficient ?? 0) * Math.sqrt(normal);
  return Math.abs(lambda[i]) < bound * (1 - 1e-6);
}

/** Factorises W_AA of a nominal solve; null if it is not positive definite. */
export function factorActiveSet(nominal: ConstraintSpaceSolution): ActiveSetFactor | null {
  const { rows, impulsesNs: lambda, compliance, rowCount: m, observationCount: o } = nominal;
  const size = m + o;
  const activeList: number[] = [];
  for (let i = 0; i < m; i++) {
    if (isActive(rows[i], i, lambda, compliance[i * size + i])) activeList.push(i);
  }
  const active = Int32Array.from(activeList);
  const n = active.length;
  const factor = new Float64Array(n * n);
  let meanDiagonal = 0;
  for (let a = 0; a < n; a++) meanDiagonal += compliance[active[a] * size + active[a]];
  const ridge = n > 0 ? (1e-10 * meanDiagonal) / n : 0;
  for (let a = 0; a < n; a++) {
    for (let c = 0; c <= a; c++) {
      let sum = compliance[active[a] * size + active[c]] + (a === c ? ridge : 0);
      for (let k = 0; k < c; k++) sum -= factor[a * n + k] * factor[c * n + k];
      if (a === c) {
        if (!(sum > 0)) return null;
        factor[a * n + a] = Math.sqrt(sum);
      } else {
        factor[a * n + c] = sum / factor[c * n + c];
      }
    }
  }
  return { nominal, active, factor };
}

/**
 * The observed points for the needle rows of a nearby command (same rows, other violations and
 * preloads), with the nominal W and active set. Null if the rows do not match the nominal ones
 * (another contact state): the caller then solves that command in full.
 */
export function observeWithActiveSet(
  factored: ActiveSetFactor,
  rows: readonly ConstraintRow[],
  h: number,
): Vec3[] | null {
  const { nominal, active, factor } = factored;
  const m = nominal.rowCount;
  const o = nominal.observationCount;
  if (rows.length !== m) return null;
  for (let i = 0; i < m; i++) if (rows[i].kind !== nominal.rows[i].kind) return null;
  const size = m + o;
  const w = nominal.compliance;
  const preload = new Float64Array(m);
  for (let i = 0; i < m; i++) preload[i] = rows[i].preloadImpulseNs ?? 0;
  const lambda = Float64Array.from(nominal.impulsesNs);
  const n = active.length;
  const rhs = new Float64Array(n);
  const isActiveRow = new Uint8Array(m);
  for (const i of active) isActiveRow[i] = 1;
  // In the change μ = λ − p (the preloads are already in the free motion) the problem is
  // W·μ = −c*/h: W multiplies only the step's change, so the nominal W serves the nearby
  // commands to first order even though they turn the rows' directions (W·p would not: p is the
  // whole holding force). Held rows keep their nominal change.
  const held = new Float64Array(m);
  for (let j = 0; j < m; j++) {
    if (!isActiveRow[j]) held[j] = nominal.impulsesNs[j] - nominal.preloadNs[j];
  }
  for (let a = 0; a < n; a++) {
    const i = active[a];
    let value = rows[i].violationM / h;
    for (let j = 0; j < m; j++) if (!isActiveRow[j]) value += w[i * size + j] * held[j];
    rhs[a] = -value;
  }
  // L·y = rhs, Lᵀ·λ_A = y.
  for (let a = 0; a < n; a++) {
    let sum = rhs[a];
    for (let k = 0; k < a; k++) sum -= factor[a * n + k] * rhs[k];
    rhs[a] = sum / factor[a * n + a];
  }
  for (let a = n - 1; a >= 0; a--) {
    let sum = rhs[a];
    for (let k = a + 1; k < n; k++) sum -= factor[k * n + a] * rhs[k];
    rhs[a] = sum / factor[a * n + a];
  }
  for (let a = 0; a < n; a++) lambda[active[a]] = preload[active[a]] + rhs[a];
  for (let j = 0; j < m; j++) if (!isActiveRow[j]) lambda[j] = preload[j] + held[j];
  return observedPoints(w, m, o, nominal.observedFreeM, lambda, preload, h);
}
