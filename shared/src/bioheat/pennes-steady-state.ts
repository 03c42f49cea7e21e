/**
 * Steady state of the Pennes bioheat equation on a voxel grid: 0 = ∇·(k∇T) − ω_b ρ_b c_b
 * (T − T_a) + Q, with the same finite volumes, walls and clamped voxels as the time-dependent
 * solver (`pennes-solver.ts`), so that running that one long enough approaches this answer.
 *
 * The discrete operator is symmetric positive definite whenever some heat can leave (perfusion
 * somewhere, a body-temperature wall or a clamped voxel), so conjugate gradients with the
 * diagonal as preconditioner solve it (Hestenes & Stiefel 1952; common practice).
 */
import { resolveMedium, type BioheatMedium, type ResolvedMedium } from './bioheat-grid';

/** A steady Pennes problem: the medium and a constant source. */
export interface PennesSteadyProblem extends BioheatMedium {
  /** Absorbed power density Q per voxel, W/m³. */
  powerDensityWPerM3: Float32Array | Float64Array;
  /** Stop when ‖residual‖ ≤ tolerance·‖Q‖ (default 1e-10). */
  relativeTolerance?: number;
  /** Give up after this many iterations (default 10 000) with a RangeError. */
  maxIterations?: number;
}

export interface PennesSteadyResult {
  /** Steady temperature per voxel, °C. */
  temperatureC: Float64Array;
  /** Conjugate-gradient iterations used. */
  iterations: number;
  /** ‖residual‖/‖Q‖ at the end. */
  relativeResidual: number;
}

/**
 * Solves the steady Pennes equation for the rise above the arterial temperature and answers
 * temperatures in °C. Throws a RangeError for malformed input, for a problem with no way for
 * heat to leave (no perfusion, all walls insulated, nothing clamped: no steady state), and
 * when the iterations do not converge.
 */
export function solvePennesSteadyState(problem: Readonly<PennesSteadyProblem>): PennesSteadyResult {
  const medium = resolveMedium(problem);
  const { voxelCount, clampedMask } = medium;
  const source = problem.powerDensityWPerM3;
  if (source.length !== voxelCount) {
    throw new RangeError(`powerDensityWPerM3 has ${source.length} voxels, the grid ${voxelCount}`);
  }
  const tolerance = problem.relativeTolerance ?? 1e-10;
  const maxIterations = problem.maxIterations ?? 10_000;
  if (!(tolerance > 0)) throw new RangeError('relativeTolerance must be positive');
  if (!(maxIterations >= 1)) throw new RangeError('maxIterations must be at least 1');

  const operator = new SteadyOperator(medium);
  const rise = new Float64Array(voxelCount);
  const residual = new Float64Array(voxelCount);
  for (let index = 0; index < voxelCount; index++) {
    const isClamped = clampedMask !== null && clampedMask[index] !== 0;
    residual[index] = isClamped ? 0 : source[index];
  }
  const sourceNorm = Math.sqrt(dotProduct(residual, residual));
  const arterialC = medium.tissue.arterialTemperatureC;
  if (sourceNorm === 0) {
    return {
      temperatureC: new Float64Array(voxelCount).fill(arterialC),
      iterations: 0,
      relativeResidual: 0,
    };
  }
  const preconditioned = new Float64Array(voxelCount);
  const direction = new Float64Array(voxelCount);
  const product = new Float64Array(voxelCount);
  operator.precondition(residual, preconditioned);
  direction.set(preconditioned);
  let residualDotPreconditioned = dotProduct(residual, preconditioned);
  let relativeResidual = 1;
  let iterations = 0;
  while (relativeResidual > tolerance) {
    if (iterations >= maxIterations) {
      throw new RangeError(
        `the steady-state solver did not converge in ${maxIterations} iterations ` +
          `(relative residual ${relativeResidual.toExponential(2)})`,
      );
    }
    operator.apply(direction, product);
    const step = residualDotPreconditioned / dotProduct(direction, product);
    for (let index = 0; index < voxelCount; index++) {
      rise[index] += step * direction[index];
      residual[index] -= step * product[index];
    }
    iterations++;
    relativeResidual = Math.sqrt(dotProduct(residual, residual)) / sourceNorm;
    operator.precondition(residual, preconditioned);
    const next = dotProduct(residual, preconditioned);
    const beta = next / residualDotPreconditioned;
    residualDotPreconditioned = next;
    for (let index = 0; index < voxelCount; index++) {
      direction[index] = preconditioned[index] + beta * direction[index];
    }
  }
  const temperatureC = new Float64Array(voxelCount);
  for (let index = 0; index < voxelCount; index++) temperatureC[index] = rise[index] + arterialC;
  return { temperatureC, iterations, relativeResidual };
}

function dotProduct(a: Float64Array, b: Float64Array): number {
  let sum = 0;
  for (let index = 0; index < a.length; index++) sum += a[index] * b[index];
  return sum;
}

/**
 * The steady operator per unit volume, W/m³ per kelvin of rise:
 * (Aθ)_v = Σ_faces k/h² (θ_v − θ_neighbour) + ω_b ρ_b c_b f_v θ_v, a neighbour beyond a
 * body-temperature wall counting as θ = 0 and a face on an insulated wall as no term. Clamped
 * voxels are rows of the identity with θ = 0, which keeps the matrix symmetric.
 */
class SteadyOperator {
  private readonly diagonal: Float64Array;
  private readonly conductanceI: number;
  private readonly conductanceJ: number;
  private readonly conductanceK: number;

  constructor(private readonly medium: ResolvedMedium) {
    const { tissue, spacingM, voxelCount, nx, ny, nz, clampedMask, perfusionFactor } = medium;
    const [fixedILow, fixedIHigh, fixedJLow, fixedJHigh, fixedKLow, fixedKHigh] =
      medium.isFixedWall;
    this.conductanceI = tissue.conductivityWPerMK / spacingM[0] ** 2;
    this.conductanceJ = tissue.conductivityWPerMK / spacingM[1] ** 2;
    this.conductanceK = tissue.conductivityWPerMK / spacingM[2] ** 2;
    const perfusion = tissue.perfusionPerS * tissue.bloodHeatCapacityJPerM3K;
    this.diagonal = new Float64Array(voxelCount);
    let canLoseHeat = false;
    for (let k = 0; k < nz; k++) {
      for (let j = 0; j < ny; j++) {
        for (let i = 0; i < nx; i++) {
          const index = i + nx * (j + ny * k);
          if (clampedMask !== null && clampedMask[index] !== 0) {
            this.diagonal[index] = 1;
            canLoseHeat = true;
            continue;
          }
          const sides = (isInside: boolean, isFixed: boolean) => (isInside || isFixed ? 1 : 0);
          const loss = perfusion * (perfusionFactor === null ? 1 : perfusionFactor[index]);
          if (loss > 0) canLoseHeat = true;
          this.diagonal[index] =
            this.conductanceI * (sides(i > 0, fixedILow) + sides(i < nx - 1, fixedIHigh)) +
            this.conductanceJ * (sides(j > 0, fixedJLow) + sides(j < ny - 1, fixedJHigh)) +
            this.conductanceK * (sides(k > 0, fixedKLow) + sides(k < nz - 1, fixedKHigh)) +
            loss;
        }
      }
    }
    if (!canLoseHeat && !medium.isFixedWall.some((isFixed) => isFixed)) {
      throw new RangeError(
        'the steady state does not exist: no perfusion, every wall insulated and nothing clamped',
      );
    }
  }

  /** out = A·θ. Clamped entries of θ must be 0 (conjugate gradients keep them so). */
  apply(rise: Float64Array, out: Float64Array): void {
    const { nx, ny, nz, clampedMask } = this.medium;
    const { conductanceI, conductanceJ, conductanceK, diagonal } = this;
    const strideK = nx * ny;
    for (let k = 0; k < nz; k++) {
      for (let j = 0; j < ny; j++) {
        const rowStart = nx * j + strideK * k;
        for (let i = 0; i < nx; i++) {
          const index = rowStart + i;
          if (clampedMask !== null && clampedMask[index] !== 0) {
            out[index] = rise[index];
            continue;
          }
          // Neighbours beyond a wall add nothing: 0 past a body-temperature wall, and an
          // insulated face has no term in the diagonal either.
          const neighbours =
            conductanceI * ((i > 0 ? rise[index - 1] : 0) + (i < nx - 1 ? rise[index + 1] : 0)) +
            conductanceJ * ((j > 0 ? rise[index - nx] : 0) + (j < ny - 1 ? rise[index + nx] : 0)) +
            conductanceK *
              ((k > 0 ? rise[index - strideK] : 0) + (k < nz - 1 ? rise[index + strideK] : 0));
          out[index] = diagonal[index] * rise[index] - neighbours;
        }
      }
    }
  }

  /** out = D⁻¹·r, D the diagonal of A (Jacobi preconditioner). */
  precondition(residual: Float64Array, out: Float64Array): void {
    const { diagonal } = this;
    for (let index = 0; index < residual.length; index++)
      out[index] = residual[index] / diagonal[index];
  }
}
