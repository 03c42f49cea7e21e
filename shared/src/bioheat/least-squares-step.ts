/**
 * One damped Gauss–Newton (Levenberg–Marquardt) step for a small least-squares problem: the δ
 * that minimises ‖r + J·δ‖² + λ·Σ d_j·δ_j², d the diagonal of JᵀJ (Marquardt's scaling, so the
 * damping does not depend on the parameters' units). Marquardt, J SIAM 1963;11:431; common
 * practice for a handful of parameters.
 */

/**
 * The step δ (one entry per column of `jacobian`; 0 for a parameter not in `isFree`) for the
 * residuals `residuals` and their Jacobian (one row per residual), damped by `damping` ≥ 0.
 */
export function dampedGaussNewtonStep(
  jacobian: readonly (readonly number[])[],
  residuals: readonly number[],
  damping: number,
  isFree: readonly boolean[],
): number[] {
  const columns = isFree.flatMap((free, index) => (free ? [index] : []));
  const size = columns.length;
  const step = new Array<number>(isFree.length).fill(0);
  if (size === 0) return step;
  const normal = Array.from({ length: size }, () => new Array<number>(size).fill(0));
  const gradient = new Array<number>(size).fill(0);
  jacobian.forEach((row, residualIndex) => {
    for (let a = 0; a < size; a++) {
      const value = row[columns[a]];
      gradient[a] -= value * residuals[residualIndex];
      for (let b = 0; b <= a; b++) normal[a][b] += value * row[columns[b]];
    }
  });
  for (let a = 0; a < size; a++) {
    for (let b = 0; b < a; b++) normal[b][a] = normal[a][b];
    // A floor keeps a parameter the residuals do not see (a zero column) from a zero pivot.
    normal[a][a] += damping * Math.max(normal[a][a], 1e-9) + 1e-12;
  }
  const solution = solveSymmetric(normal, gradient);
  columns.forEach((column, index) => (step[column] = solution[index]));
  return step;
}

/** Solves A·x = b for a small symmetric positive definite A by Gaussian elimination. */
function solveSymmetric(matrix: number[][], right: number[]): number[] {
  const size = right.length;
  const a = matrix.map((row) => [...row]);
  const b = [...right];
  for (let pivot = 0; pivot < size; pivot++) {
    let best = pivot;
    for (let row = pivot + 1; row < size; row++) {
      if (Math.abs(a[row][pivot]) > Math.abs(a[best][pivot])) best = row;
    }
    [a[pivot], a[best]] = [a[best], a[pivot]];
    [b[pivot], b[best]] = [b[best], b[pivot]];
    const diagonal = a[pivot][pivot];
    if (diagonal === 0) continue;
    for (let row = pivot + 1; row < size; row++) {
      const factor = a[row][pivot] / diagonal;
      if (factor === 0) continue;
      for (let column = pivot; column < size; column++) a[row][column] -= factor * a[pivot][column];
      b[row] -= factor * b[pivot];
    }
  }
  const x = new Array<number>(size).fill(0);
  for (let row = size - 1; row >= 0; row--) {
    let sum = b[row];
    for (let column = row + 1; column < size; column++) sum -= a[row][column] * x[column];
    x[row] = a[row][row] === 0 ? 0 : sum / a[row][row];
  }
  return x;
}
