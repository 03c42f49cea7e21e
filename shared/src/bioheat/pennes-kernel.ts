/**
 * The inner loop of the explicit Pennes solver (`pennes-solver.ts`), kept apart so that the
 * loop stays small and branch-free. Internal: not exported from the package.
 *
 * Temperatures are held as the rise θ = T − T_a (kelvin) on a grid padded by one layer of ghost
 * voxels on every side: ghosts beyond a body-temperature wall stay 0; ghosts beyond an
 * insulated wall copy their neighbour after every step (no flux). Every other field lives on
 * the unpadded grid. Clamped voxels are multiplied out (`free` = 0) and stay at θ = 0.
 */
import type { ResolvedMedium } from './bioheat-grid';
import { DamageRateTable, RATE_TABLE_BELOW_K, RATE_TABLE_STEPS_PER_K } from './damage-rate-table';
import { thermalDiffusivityM2PerS } from './tissue-properties';

/** Beyond this Ω (survival e^−1e6) the tissue is dead; capping it keeps the fields finite. */
const OMEGA_CEILING = 1e6;
/** Beyond this CEM43 (about 19 000 years at 43 °C) likewise, minutes. */
const CEM43_CEILING_MINUTES = 1e10;

/**
 * exp(−Ω) for perfusion that stops with damage: 1 − Ω + Ω²/2 below Ω = 0.01 (error under
 * 2e-7), 0 above Ω = 40 (below 5e-18), Math.exp between — most voxels skip the exp.
 */
function survivalOf(omega: number): number {
  if (omega < 0.01) return 1 - omega + 0.5 * omega * omega;
  return omega > 40 ? 0 : Math.exp(-omega);
}

/**
 * The solver's state and its step: fields allocated once, `setPhase` before each phase, `step`
 * as often as the phase needs. Times in seconds, rises in kelvin, damage as in `pennes-solver`.
 */
export class PennesKernel {
  /** Padded rise, now and next (swapped after every step), kelvin. */
  private rise: Float64Array;
  private nextRise: Float64Array;
  /** 1 for a free voxel, 0 for a clamped one. */
  private readonly free: Float64Array;
  /** f·ω_b·ρ_b·c_b/(ρc) per voxel, 1/s (0 when clamped). */
  private readonly perfusionRate: Float64Array;
  /** exp(−Ω) when perfusion stops with damage, else 1 throughout. */
  private readonly survival: Float64Array;
  /** Rise per step from the source of the current phase, kelvin (0 when clamped). */
  private readonly sourceRise: Float64Array;
  readonly peakTemperatureC: Float64Array;
  readonly omega: Float64Array;
  readonly cem43Minutes: Float64Array;
  /** Rates at the current temperature, for the trapezoidal rule. */
  private readonly omegaRate: Float64Array;
  private readonly cem43Rate: Float64Array;
  private readonly paddedX: number;
  private readonly paddedXY: number;
  private stepS = 0;
  private readonly diffusivity: number;
  private readonly heatCapacity: number;

  constructor(
    private readonly medium: ResolvedMedium,
    private readonly rates: DamageRateTable,
    private readonly isPerfusionStoppedByDamage: boolean,
    initialRiseK: Float64Array | null,
  ) {
    const { nx, ny, nz, voxelCount, tissue, clampedMask, perfusionFactor } = medium;
    this.paddedX = nx + 2;
    this.paddedXY = (nx + 2) * (ny + 2);
    const paddedCount = this.paddedXY * (nz + 2);
    this.rise = new Float64Array(paddedCount);
    this.nextRise = new Float64Array(paddedCount);
    this.free = new Float64Array(voxelCount);
    this.perfusionRate = new Float64Array(voxelCount);
    this.survival = new Float64Array(voxelCount).fill(1);
    this.sourceRise = new Float64Array(voxelCount);
    this.peakTemperatureC = new Float64Array(voxelCount);
    this.omega = new Float64Array(voxelCount);
    this.cem43Minutes = new Float64Array(voxelCount);
    this.omegaRate = new Float64Array(voxelCount);
    this.cem43Rate = new Float64Array(voxelCount);
    this.diffusivity = thermalDiffusivityM2PerS(tissue);
    this.heatCapacity = tissue.densityKgPerM3 * tissue.specificHeatJPerKgK;
    const basePerfusionRate =
      (tissue.perfusionPerS * tissue.bloodHeatCapacityJPerM3K) / this.heatCapacity;
    const arterialC = tissue.arterialTemperatureC;
    for (let index = 0; index < voxelCount; index++) {
      const isFree = clampedMask === null || clampedMask[index] === 0;
      this.free[index] = isFree ? 1 : 0;
      this.perfusionRate[index] = isFree
        ? basePerfusionRate * (perfusionFactor === null ? 1 : perfusionFactor[index])
        : 0;
      const riseK = isFree && initialRiseK !== null ? initialRiseK[index] : 0;
      this.rise[this.paddedIndex(index)] = riseK;
      this.peakTemperatureC[index] = arterialC + riseK;
      this.omegaRate[index] = rates.omegaRatePerS(arterialC + riseK);
      this.cem43Rate[index] = rates.cem43RateMinutesPerS(arterialC + riseK);
    }
    this.refreshInsulatedGhosts(this.rise);
  }

  /** Sets the step length (s) and the source (W/m³ per voxel, or none) for the coming steps. */
  setPhase(stepS: number, powerDensityWPerM3: Float32Array | Float64Array | null): void {
    this.stepS = stepS;
    const weight = stepS / this.heatCapacity;
    for (let index = 0; index < this.sourceRise.length; index++) {
      this.sourceRise[index] =
        powerDensityWPerM3 === null ? 0 : weight * powerDensityWPerM3[index] * this.free[index];
    }
  }

  /** One forward-Euler step of the temperature, and the damage over it (trapezoidal rule). */
  step(): void {
    const { nx, ny, nz, spacingM } = this.medium;
    const { rise, nextRise, free, perfusionRate, survival, sourceRise } = this;
    const { peakTemperatureC, omega, cem43Minutes, omegaRate, cem43Rate, rates } = this;
    const { omegaRates, cem43Rates, lastPosition } = rates;
    const lastEntry = lastPosition - 1;
    const paddedX = this.paddedX;
    const paddedXY = this.paddedXY;
    const stepS = this.stepS;
    const halfStepS = stepS / 2;
    const weightI = (this.diffusivity * stepS) / spacingM[0] ** 2;
    const weightJ = (this.diffusivity * stepS) / spacingM[1] ** 2;
    const weightK = (this.diffusivity * stepS) / spacingM[2] ** 2;
    const weightSelf = 2 * (weightI + weightJ + weightK);
    const arterialC = this.medium.tissue.arterialTemperatureC;
    const isPerfusionStoppedByDamage = this.isPerfusionStoppedByDamage;
    for (let k = 0; k < nz; k++) {
      for (let j = 0; j < ny; j++) {
        let padded = 1 + paddedX * (j + 1) + paddedXY * (k + 1);
        let index = nx * (j + ny * k);
        for (let i = 0; i < nx; i++, padded++, index++) {
          const here = rise[padded];
          const next =
            free[index] *
              (here +
                weightI * (rise[padded - 1] + rise[padded + 1]) +
                weightJ * (rise[padded - paddedX] + rise[padded + paddedX]) +
                weightK * (rise[padded - paddedXY] + rise[padded + paddedXY]) -
                (weightSelf + stepS * perfusionRate[index] * survival[index]) * here) +
            sourceRise[index];
          nextRise[padded] = next;
          const temperatureC = next + arterialC;
          if (temperatureC > peakTemperatureC[index]) peakTemperatureC[index] = temperatureC;
          // Table position of the new temperature, clamped to the table (damage-rate-table.ts).
          let position = (next + RATE_TABLE_BELOW_K) * RATE_TABLE_STEPS_PER_K;
          position = position < 0 ? 0 : position > lastPosition ? lastPosition : position;
          const entry = Math.min(position | 0, lastEntry);
          const fraction = position - entry;
          const newOmegaRate =
            omegaRates[entry] + fraction * (omegaRates[entry + 1] - omegaRates[entry]);
          const newCem43Rate =
            cem43Rates[entry] + fraction * (cem43Rates[entry + 1] - cem43Rates[entry]);
          const newOmega = Math.min(
            OMEGA_CEILING,
            omega[index] + halfStepS * (omegaRate[index] + newOmegaRate),
          );
          omega[index] = newOmega;
          omegaRate[index] = newOmegaRate;
          cem43Minutes[index] = Math.min(
            CEM43_CEILING_MINUTES,
            cem43Minutes[index] + halfStepS * (cem43Rate[index] + newCem43Rate),
          );
          cem43Rate[index] = newCem43Rate;
          if (isPerfusionStoppedByDamage) survival[index] = survivalOf(newOmega);
        }
      }
    }
    this.refreshInsulatedGhosts(nextRise);
    this.rise = nextRise;
    this.nextRise = rise;
  }

  /** The current rise above the arterial temperature on the unpadded grid, kelvin. */
  riseK(out: Float64Array = new Float64Array(this.medium.voxelCount)): Float64Array {
    for (let index = 0; index < out.length; index++)
      out[index] = this.rise[this.paddedIndex(index)];
    return out;
  }

  private paddedIndex(index: number): number {
    const { nx, ny } = this.medium;
    const i = index % nx;
    const j = Math.floor(index / nx) % ny;
    const k = Math.floor(index / (nx * ny));
    return i + 1 + this.paddedX * (j + 1) + this.paddedXY * (k + 1);
  }

  /** Copies each voxel on an insulated wall into its ghost: no temperature step, no flux. */
  private refreshInsulatedGhosts(field: Float64Array): void {
    const { nx, ny, nz, isFixedWall } = this.medium;
    const [fixedILow, fixedIHigh, fixedJLow, fixedJHigh, fixedKLow, fixedKHigh] = isFixedWall;
    const paddedX = this.paddedX;
    const paddedXY = this.paddedXY;
    const at = (i: number, j: number, k: number) => i + paddedX * j + paddedXY * k;
    for (let k = 1; k <= nz; k++) {
      for (let j = 1; j <= ny; j++) {
        if (!fixedILow) field[at(0, j, k)] = field[at(1, j, k)];
        if (!fixedIHigh) field[at(nx + 1, j, k)] = field[at(nx, j, k)];
      }
      for (let i = 1; i <= nx; i++) {
        if (!fixedJLow) field[at(i, 0, k)] = field[at(i, 1, k)];
        if (!fixedJHigh) field[at(i, ny + 1, k)] = field[at(i, ny, k)];
      }
    }
    for (let j = 1; j <= ny; j++) {
      for (let i = 1; i <= nx; i++) {
        if (!fixedKLow) field[at(i, j, 0)] = field[at(i, j, 1)];
        if (!fixedKHigh) field[at(i, j, nz + 1)] = field[at(i, j, nz)];
      }
    }
  }
}
