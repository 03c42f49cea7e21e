/**
 * Dense linear algebra for the tissue solver's tests: small reference computations done the
 * plain way, independent of the solver's sparse matrices and conjugate gradients.
 */

/** x with A·x = b, Gaussian elimination with partial pivoting; A is n×n row-major (copied). */
export function denseSolve(matrix: Float64Array, b: Float64Array): Float64Array {
  const n = b.length;
  const a = matrix.slice();
  const x = b.slice();
  for (let column = 0; column < n; column++) {
    let pivot = column;
    for (let row = column + 1; row < n; row++) {
      if (Math.abs(a[row * n + column]) > Math.abs(a[pivot * n + column])) pivot = row;
    }
    if (a[pivot * n + column] === 0) throw new Error('Singular matrix.');
    if (pivot !== column) {
      for (let k = 0; k < n; k++) {
        const swap = a[column * n + k];
        a[column * n + k] = a[pivot * n + k];
        a[pivot * n + k] = swap;
      }
      const swap = x[column];
      x[column] = x[pivot];
      x[pivot] = swap;
    }
    for (let row = column + 1; row < n; row++) {
      const factor = a[row * n + column] / a[column * n + column];
      if (factor === 0) continue;
      for (let k = column; k < n; k++) a[row * n + k] -= factor * a[column * n + k];
      x[row] -= factor * x[column];
    }
  }
  for (let row = n - 1; row >= 0; row--) {
    let sum = x[row];
    for (let k = row + 1; k < n; k++) sum -= a[row * n + k] * x[k];
    x[row] = sum / a[row * n + row];
  }
  return x;
}

/** y = A·x for an n×m row-major A. */
export function denseMultiply(matrix: Float64Array, x: Float64Array): Float64Array {
  const m = x.length;
  const n = matrix.length / m;
  const y = new Float64Array(n);
  for (let row = 0; row < n; row++) {
    let sum = 0;
    for (let k = 0; k < m; k++) sum += matrix[row * m + k] * x[k];
    y[row] = sum;
  }
  return y;
}

/** A deterministic pseudo-random sequence in [0, 1) (Park & Miller's minimal standard). */
export function seededRandom(seed: number): () => number {
  let state = seed % 2147483647;
  if (state <= 0) state += 2147483646;
  return () => {
    state = (state * 16807) % 2147483647;
    return (state - 1) / 2147483646;
  };
}

/** Row-major 3×3 rotation by angleRad about the unit axis (Rodrigues' formula). */
export function rotationMatrix(axis: readonly number[], angleRad: number): Float64Array {
  const norm = Math.hypot(axis[0], axis[1], axis[2]);
  const [x, y, z] = axis.map((c) => c / norm);
  const c = Math.cos(angleRad);
  const s = Math.sin(angleRad);
  const t = 1 - c;
  return Float64Array.from([
    t * x * x + c,
    t * x * y - s * z,
    t * x * z + s * y,
    t * x * y + s * z,
    t * y * y + c,
    t * y * z - s * x,
    t * x * z - s * y,
    t * y * z + s * x,
    t * z * z + c,
  ]);
}

/** Row-major 3×3 product a·b. */
export function multiply3(a: ArrayLike<number>, b: ArrayLike<number>): Float64Array {
  const out = new Float64Array(9);
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) {
      out[3 * i + j] = a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j];
    }
  }
  return out;
}

/** Row-major transpose of a 3×3 matrix. */
export function transpose3(a: ArrayLike<number>): Float64Array {
  return Float64Array.from([a[0], a[3], a[6], a[1], a[4], a[7], a[2], a[5], a[8]]);
}
