/**
 * Preconditioned conjugate gradients (Hestenes & Stiefel, J Res Natl Bur Stand 1952;49:409) on
 * a symmetric positive definite system with some unknowns fixed at zero; the preconditioner is
 * the caller's (the solver offers the diagonal, Jacobi, and incomplete Cholesky).
 *
 * Fixed unknowns are handled by projection, the filter S (1 on free unknowns, 0 on fixed) of
 * Baraff & Witkin's modified CG (Large steps in cloth simulation, SIGGRAPH 1998, §5.3): CG runs
 * on S·A·S y = S·b with every vector kept in the free subspace, which is plain PCG on the
 * reduced system A_ff·y_f = b_f — the same as eliminating the fixed rows and columns (Ascher &
 * Boxerman, The Visual Computer 2003;19:526, discuss why the projection must be applied this
 * way to stay symmetric). Fixed unknowns with a non-zero prescribed value are the caller's
 * business: move A·(known part) to the right-hand side first.
 */

/** Stopping rule of a conjugate-gradient solve. */
export interface PcgOptions {
  /** Stop when ‖S·(b − A·y)‖₂ ≤ relativeTolerance · ‖S·b‖₂ (recursive residual). */
  relativeTolerance: number;
  /** Give up after this many iterations. */
  maxIterations: number;
}

/** What a conjugate-gradient solve did. */
export interface PcgReport {
  /** Iterations (products with A) used. */
  iterations: number;
  /** Final ‖r‖/‖b‖ of the free unknowns (0 when b is 0 there). */
  relativeResidual: number;
  /** Whether the tolerance was reached within the iteration cap. */
  converged: boolean;
}

/** Reusable work vectors for one size of system. */
export class PcgWorkspace {
  readonly r: Float64Array;
  readonly z: Float64Array;
  readonly p: Float64Array;
  readonly q: Float64Array;

  constructor(readonly size: number) {
    this.r = new Float64Array(size);
    this.z = new Float64Array(size);
    this.p = new Float64Array(size);
    this.q = new Float64Array(size);
  }
}

/**
 * Solves S·A·S·y = S·b for y (y = 0 on fixed unknowns), starting from y = 0 or, with
 * `isWarmStart`, from the free part of the y passed in (the tolerance stays relative to ‖S·b‖).
 *
 * @param multiply writes A·x into out (the product's values on fixed unknowns are ignored)
 * @param precondition writes M⁻¹·r into z for an SPD approximation M of A; it must leave z
 *   at 0 on fixed unknowns when r is 0 there
 * @param constrained 1 on fixed unknowns, 0 on free ones: the filter S = I − diag(constrained)
 */
export function projectedPcg(
  multiply: (x: Float64Array, out: Float64Array) => void,
  precondition: (r: Float64Array, z: Float64Array) => void,
  constrained: Uint8Array,
  b: Float64Array,
  y: Float64Array,
  options: PcgOptions,
  work: PcgWorkspace,
  isWarmStart = false,
): PcgReport {
  const { r, z, p, q } = work;
  const n = b.length;
  let bNorm = 0;
  for (let index = 0; index < n; index++) {
    if (constrained[index] || !isWarmStart) y[index] = 0;
    if (!constrained[index]) bNorm += b[index] * b[index];
  }
  bNorm = Math.sqrt(bNorm);
  if (bNorm === 0) {
    y.fill(0);
    return { iterations: 0, relativeResidual: 0, converged: true };
  }
  if (isWarmStart) multiply(y, q);
  let residualNorm = 0;
  for (let index = 0; index < n; index++) {
    const value = constrained[index] ? 0 : b[index] - (isWarmStart ? q[index] : 0);
    r[index] = value;
    residualNorm += value * value;
  }
  residualNorm = Math.sqrt(residualNorm);
  const target = options.relativeTolerance * bNorm;
  if (residualNorm <= target) {
    return { iterations: 0, relativeResidual: residualNorm / bNorm, converged: true };
  }
  precondition(r, z);
  let rz = 0;
  for (let index = 0; index < n; index++) {
    p[index] = z[index];
    rz += r[index] * z[index];
  }
  for (let iteration = 1; iteration <= options.maxIterations; iteration++) {
    multiply(p, q);
    let pq = 0;
    for (let index = 0; index < n; index++) {
      if (constrained[index]) q[index] = 0;
      else pq += p[index] * q[index];
    }
    if (!(pq > 0)) {
      // Not positive definite on the free unknowns (e.g. a free body in a static solve).
      return { iterations: iteration, relativeResidual: residualNorm / bNorm, converged: false };
    }
    const alpha = rz / pq;
    let rr = 0;
    for (let index = 0; index < n; index++) {
      y[index] += alpha * p[index];
      const ri = r[index] - alpha * q[index];
      r[index] = ri;
      rr += ri * ri;
    }
    residualNorm = Math.sqrt(rr);
    if (residualNorm <= target) {
      return { iterations: iteration, relativeResidual: residualNorm / bNorm, converged: true };
    }
    precondition(r, z);
    let rzNext = 0;
    for (let index = 0; index < n; index++) rzNext += r[index] * z[index];
    const beta = rzNext / rz;
    rz = rzNext;
    for (let index = 0; index < n; index++) p[index] = z[index] + beta * p[index];
  }
  return {
    iterations: options.maxIterations,
    relativeResidual: residualNorm / bNorm,
    converged: false,
  };
}
