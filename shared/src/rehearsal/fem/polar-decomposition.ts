/**
 * The rotation R of a 3×3 deformation gradient F = R·S (S symmetric), as the corotational
 * formulation needs it once per element and step.
 *
 * Two published methods:
 * - the scaled Newton iteration X ← ½(γ·X + γ⁻¹·X⁻ᵀ) of Higham (SIAM J Sci Stat Comput
 *   1986;7:1160–1174), with his Frobenius-norm scaling γ = (‖X⁻¹‖/‖X‖)^½, used while det F is
 *   clearly positive: it converges quadratically to the orthogonal polar factor, which is then a
 *   proper rotation;
 * - for inverted or nearly flat elements (det F small or negative), where the polar factor would
 *   be a reflection, the SVD route of Irving, Teran & Fedkiw (Invertible finite elements for
 *   robust simulation of large deformation, SCA 2004): F = U·Σ·Vᵀ from the eigenvectors of FᵀF
 *   (cyclic Jacobi), U and V both made proper rotations, so that the sign of the smallest
 *   singular value carries the inversion and R = U·Vᵀ stays a rotation.
 *
 * Matrices are row-major, length 9: m[3·i + j] = m_ij.
 */

/** Which method produced the rotation. */
export type PolarMethod = 'higham' | 'svd';

/**
 * det F below this fraction of (‖F‖_F/√3)³ goes to the SVD route: Higham's iteration needs
 * F⁻¹, and near zero volume its rounding grows as 1/det F.
 */
const HIGHAM_MIN_RELATIVE_DETERMINANT = 1e-4;
/** Newton steps are stopped at this change (Frobenius), the iterate then being orthogonal. */
const HIGHAM_TOLERANCE = 1e-13;
/** Higham's advice: drop the scaling once close, to keep the final quadratic convergence. */
const HIGHAM_UNSCALED_BELOW = 1e-2;
const HIGHAM_MAX_ITERATIONS = 40;
const JACOBI_MAX_SWEEPS = 30;

// Scratch space: the functions are synchronous and shared/ runs one solver per thread.
const x = new Float64Array(9);
const cofactor = new Float64Array(9);
const c = new Float64Array(9);
const v = new Float64Array(9);
const eigen = new Float64Array(3);
const u = new Float64Array(9);

/** det of a row-major 3×3 matrix. */
export function determinant3(m: ArrayLike<number>): number {
  return (
    m[0] * (m[4] * m[8] - m[5] * m[7]) -
    m[1] * (m[3] * m[8] - m[5] * m[6]) +
    m[2] * (m[3] * m[7] - m[4] * m[6])
  );
}

/**
 * Writes the rotation of F into `out` (row-major 3×3, det +1) and says which method found it.
 * F with det F clearly positive gives the polar factor; an inverted F gives the rotation of
 * Irving et al. (R·S with S symmetric but one negative eigenvalue); F = 0 gives the identity.
 */
export function rotationOfDeformation(f: ArrayLike<number>, out: Float64Array): PolarMethod {
  let squaredNorm = 0;
  for (let index = 0; index < 9; index++) squaredNorm += f[index] * f[index];
  const scale = Math.sqrt(squaredNorm / 3);
  const det = determinant3(f);
  if (scale > 0 && det > HIGHAM_MIN_RELATIVE_DETERMINANT * scale * scale * scale) {
    if (highamPolar(f, out)) return 'higham';
  }
  svdRotation(f, out);
  return 'svd';
}

/** Higham's scaled Newton iteration; false if it did not settle (then the SVD route runs). */
function highamPolar(f: ArrayLike<number>, out: Float64Array): boolean {
  for (let index = 0; index < 9; index++) x[index] = f[index];
  let isScaled = true;
  for (let iteration = 0; iteration < HIGHAM_MAX_ITERATIONS; iteration++) {
    // X⁻ᵀ = cofactor(X) / det X.
    cofactor[0] = x[4] * x[8] - x[5] * x[7];
    cofactor[1] = x[5] * x[6] - x[3] * x[8];
    cofactor[2] = x[3] * x[7] - x[4] * x[6];
    cofactor[3] = x[2] * x[7] - x[1] * x[8];
    cofactor[4] = x[0] * x[8] - x[2] * x[6];
    cofactor[5] = x[1] * x[6] - x[0] * x[7];
    cofactor[6] = x[1] * x[5] - x[2] * x[4];
    cofactor[7] = x[2] * x[3] - x[0] * x[5];
    cofactor[8] = x[0] * x[4] - x[1] * x[3];
    const det = x[0] * cofactor[0] + x[1] * cofactor[1] + x[2] * cofactor[2];
    if (!(det > 0)) return false;
    let normX = 0;
    let normInverse = 0;
    for (let index = 0; index < 9; index++) {
      cofactor[index] /= det;
      normX += x[index] * x[index];
      normInverse += cofactor[index] * cofactor[index];
    }
    const gamma = isScaled ? Math.sqrt(Math.sqrt(normInverse / normX)) : 1;
    let change = 0;
    for (let index = 0; index < 9; index++) {
      const next = 0.5 * (gamma * x[index] + cofactor[index] / gamma);
      change += (next - x[index]) * (next - x[index]);
      x[index] = next;
    }
    change = Math.sqrt(change);
    if (change < HIGHAM_UNSCALED_BELOW) isScaled = false;
    if (change <= HIGHAM_TOLERANCE) {
      for (let index = 0; index < 9; index++) out[index] = x[index];
      return true;
    }
  }
  return false;
}

/**
 * Eigen-decomposition of the symmetric 3×3 matrix `c` by cyclic Jacobi rotations (Golub & Van
 * Loan, Matrix Computations, §8.5): eigenvalues into `eigen`, eigenvectors into the columns of
 * `v`, sorted by decreasing eigenvalue, det v = +1.
 */
function symmetricEigen(): void {
  v.fill(0);
  v[0] = v[4] = v[8] = 1;
  for (let sweep = 0; sweep < JACOBI_MAX_SWEEPS; sweep++) {
    const off = c[1] * c[1] + c[2] * c[2] + c[5] * c[5];
    const diagonal = c[0] * c[0] + c[4] * c[4] + c[8] * c[8];
    if (off <= 1e-32 * diagonal || off === 0) break;
    for (let pair = 0; pair < 3; pair++) {
      const p = pair === 2 ? 1 : 0;
      const q = pair === 0 ? 1 : 2;
      const apq = c[3 * p + q];
      if (apq === 0) continue;
      const theta = (c[3 * q + q] - c[3 * p + p]) / (2 * apq);
      const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
      const cos = 1 / Math.sqrt(t * t + 1);
      const sin = t * cos;
      // C ← Jᵀ·C·J with J the rotation in the (p, q) plane; V ← V·J.
      for (let k = 0; k < 3; k++) {
        const ckp = c[3 * k + p];
        const ckq = c[3 * k + q];
        c[3 * k + p] = cos * ckp - sin * ckq;
        c[3 * k + q] = sin * ckp + cos * ckq;
      }
      for (let k = 0; k < 3; k++) {
        const cpk = c[3 * p + k];
        const cqk = c[3 * q + k];
        c[3 * p + k] = cos * cpk - sin * cqk;
        c[3 * q + k] = sin * cpk + cos * cqk;
      }
      for (let k = 0; k < 3; k++) {
        const vkp = v[3 * k + p];
        const vkq = v[3 * k + q];
        v[3 * k + p] = cos * vkp - sin * vkq;
        v[3 * k + q] = sin * vkp + cos * vkq;
      }
    }
  }
  eigen[0] = c[0];
  eigen[1] = c[4];
  eigen[2] = c[8];
  // Sort columns by decreasing eigenvalue (three elements: a small exchange sort).
  for (let i = 0; i < 2; i++) {
    for (let j = i + 1; j < 3; j++) {
      if (eigen[j] > eigen[i]) {
        const e = eigen[i];
        eigen[i] = eigen[j];
        eigen[j] = e;
        for (let k = 0; k < 3; k++) {
          const swap = v[3 * k + i];
          v[3 * k + i] = v[3 * k + j];
          v[3 * k + j] = swap;
        }
      }
    }
  }
  if (determinant3(v) < 0) for (let k = 0; k < 3; k++) v[3 * k + 2] = -v[3 * k + 2];
}

/** R = U·Vᵀ with U, V proper rotations (Irving, Teran & Fedkiw 2004). */
function svdRotation(f: ArrayLike<number>, out: Float64Array): void {
  // C = FᵀF.
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) {
      c[3 * i + j] = f[i] * f[j] + f[3 + i] * f[3 + j] + f[6 + i] * f[6 + j];
    }
  }
  symmetricEigen();
  // u1 = F·v1 / |F·v1|.
  let n1 = 0;
  for (let i = 0; i < 3; i++) {
    u[3 * i] = f[3 * i] * v[0] + f[3 * i + 1] * v[3] + f[3 * i + 2] * v[6];
    n1 += u[3 * i] * u[3 * i];
  }
  n1 = Math.sqrt(n1);
  if (!(n1 > 0)) {
    // F = 0 (an element collapsed to a point): no rotation can be read from it.
    out.fill(0);
    out[0] = out[4] = out[8] = 1;
    return;
  }
  for (let i = 0; i < 3; i++) u[3 * i] /= n1;
  // u2 = F·v2 made orthogonal to u1 (Gram–Schmidt), or any unit vector orthogonal to u1 when
  // the element is flat along two directions.
  let along = 0;
  for (let i = 0; i < 3; i++) {
    u[3 * i + 1] = f[3 * i] * v[1] + f[3 * i + 1] * v[4] + f[3 * i + 2] * v[7];
    along += u[3 * i + 1] * u[3 * i];
  }
  let n2 = 0;
  for (let i = 0; i < 3; i++) {
    u[3 * i + 1] -= along * u[3 * i];
    n2 += u[3 * i + 1] * u[3 * i + 1];
  }
  n2 = Math.sqrt(n2);
  if (n2 > 1e-12 * n1) {
    for (let i = 0; i < 3; i++) u[3 * i + 1] /= n2;
  } else {
    // The axis least aligned with u1, crossed with u1.
    const a0 = Math.abs(u[0]);
    const a1 = Math.abs(u[3]);
    const a2 = Math.abs(u[6]);
    const axis = a0 <= a1 && a0 <= a2 ? 0 : a1 <= a2 ? 1 : 2;
    const e = [0, 0, 0];
    e[axis] = 1;
    const w0 = u[3] * e[2] - u[6] * e[1];
    const w1 = u[6] * e[0] - u[0] * e[2];
    const w2 = u[0] * e[1] - u[3] * e[0];
    const wn = Math.hypot(w0, w1, w2);
    u[1] = w0 / wn;
    u[4] = w1 / wn;
    u[7] = w2 / wn;
  }
  // u3 = u1 × u2 makes U a proper rotation; an inverted F shows as u3·F·v3 < 0.
  u[2] = u[3] * u[7] - u[6] * u[4];
  u[5] = u[6] * u[1] - u[0] * u[7];
  u[8] = u[0] * u[4] - u[3] * u[1];
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) {
      out[3 * i + j] =
        u[3 * i] * v[3 * j] + u[3 * i + 1] * v[3 * j + 1] + u[3 * i + 2] * v[3 * j + 2];
    }
  }
}
