/**
 * The regular voxel grid on which the Pennes bioheat equation is discretised, its wall
 * conditions and the coefficients both solvers share.
 *
 * Finite volumes: every voxel is a box of hx × hy × hz (spacing, millimetres in the grid,
 * converted to metres here) around its centre; neighbours along an axis exchange heat through
 * their shared face with conductance k·A/h. Voxel (i, j, k) is stored at i + nx·(j + ny·k).
 */
import type { GridDimensions } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import {
  LIVER_TISSUE,
  checkTissueProperties,
  thermalDiffusivityM2PerS,
  type TissueProperties,
} from './tissue-properties';

/** Size and spacing of a bioheat grid; its placement in the patient does not matter here. */
export interface BioheatGrid {
  /** [nx, ny, nz] voxels along i, j, k; i fastest in memory. */
  dimensions: GridDimensions;
  /** Centre-to-centre spacing along i, j, k, millimetres. */
  spacingMm: Vec3;
}

/**
 * What happens at a wall of the grid:
 * - `body-temperature`: the layer of voxels just outside the wall (one spacing beyond the last
 *   centre) is held at the arterial temperature — the grid sits inside a large body;
 * - `insulated`: no heat crosses the wall (zero flux; also a mirror plane of symmetry).
 */
export type WallCondition = 'body-temperature' | 'insulated';

/** A condition for each of the six walls: low and high end of i, j and k. */
export interface WallConditions {
  iLow: WallCondition;
  iHigh: WallCondition;
  jLow: WallCondition;
  jHigh: WallCondition;
  kLow: WallCondition;
  kHigh: WallCondition;
}

/** The parts of a Pennes problem that do not change in time. */
export interface BioheatMedium {
  grid: BioheatGrid;
  /** Thermal properties (default liver, `LIVER_TISSUE`). */
  tissue?: Readonly<TissueProperties>;
  /** One condition for every wall, or one for each (default `body-temperature`). */
  walls?: WallCondition | Readonly<WallConditions>;
  /**
   * Voxels held at the arterial temperature throughout (non-zero = held): large vessels whose
   * flowing blood carries the heat away (a heat sink).
   */
  clampedMask?: Uint8Array;
  /** Per-voxel multiplier of the perfusion rate ω_b (≥ 0, default 1 everywhere). */
  perfusionFactor?: Float32Array | Float64Array;
}

/** The medium, checked, with defaults filled in and the spacing in metres. */
export interface ResolvedMedium {
  nx: number;
  ny: number;
  nz: number;
  voxelCount: number;
  /** Spacing along i, j, k, metres. */
  spacingM: Vec3;
  /** Volume of one voxel, m³. */
  voxelVolumeM3: number;
  tissue: Readonly<TissueProperties>;
  /** Whether each wall holds body temperature (else insulated): iLow, iHigh, jLow … kHigh. */
  isFixedWall: readonly [boolean, boolean, boolean, boolean, boolean, boolean];
  clampedMask: Uint8Array | null;
  perfusionFactor: Float32Array | Float64Array | null;
  /** Largest perfusion multiplier over the unclamped voxels (1 without a factor). */
  maxPerfusionFactor: number;
}

const WALL_ORDER = ['iLow', 'iHigh', 'jLow', 'jHigh', 'kLow', 'kHigh'] as const;

/** Checks a medium and fills in defaults; throws a RangeError naming the offending field. */
export function resolveMedium(medium: Readonly<BioheatMedium>): ResolvedMedium {
  const { dimensions, spacingMm } = medium.grid;
  if (dimensions.length !== 3 || !dimensions.every((n) => Number.isInteger(n) && n >= 1)) {
    throw new RangeError(
      `grid.dimensions must be 3 positive integers, got [${dimensions.join(', ')}]`,
    );
  }
  if (spacingMm.length !== 3 || !spacingMm.every((h) => h > 0 && Number.isFinite(h))) {
    throw new RangeError(
      `grid.spacingMm must be 3 positive numbers, got [${spacingMm.join(', ')}]`,
    );
  }
  const [nx, ny, nz] = dimensions;
  const voxelCount = nx * ny * nz;
  const tissue = medium.tissue ?? LIVER_TISSUE;
  checkTissueProperties(tissue);
  const walls = medium.walls ?? 'body-temperature';
  const isFixedWall = WALL_ORDER.map((face) => {
    const condition = typeof walls === 'string' ? walls : walls[face];
    if (condition !== 'body-temperature' && condition !== 'insulated') {
      throw new RangeError(`walls.${face} must be 'body-temperature' or 'insulated'`);
    }
    return condition === 'body-temperature';
  }) as unknown as ResolvedMedium['isFixedWall'];
  const clampedMask = medium.clampedMask ?? null;
  if (clampedMask !== null && clampedMask.length !== voxelCount) {
    throw new RangeError(
      `clampedMask has ${clampedMask.length} voxels, the grid ${voxelCount} (${nx} × ${ny} × ${nz})`,
    );
  }
  const perfusionFactor = medium.perfusionFactor ?? null;
  let maxPerfusionFactor = 1;
  if (perfusionFactor !== null) {
    if (perfusionFactor.length !== voxelCount) {
      throw new RangeError(
        `perfusionFactor has ${perfusionFactor.length} voxels, the grid ${voxelCount}`,
      );
    }
    maxPerfusionFactor = 0;
    for (let index = 0; index < voxelCount; index++) {
      const factor = perfusionFactor[index];
      if (!(factor >= 0) || !Number.isFinite(factor)) {
        throw new RangeError(`perfusionFactor[${index}] must be 0 or more, got ${factor}`);
      }
      if (factor > maxPerfusionFactor && !(clampedMask !== null && clampedMask[index] !== 0)) {
        maxPerfusionFactor = factor;
      }
    }
  }
  const spacingM: Vec3 = [spacingMm[0] / 1000, spacingMm[1] / 1000, spacingMm[2] / 1000];
  return {
    nx,
    ny,
    nz,
    voxelCount,
    spacingM,
    voxelVolumeM3: spacingM[0] * spacingM[1] * spacingM[2],
    tissue,
    isFixedWall,
    clampedMask,
    perfusionFactor,
    maxPerfusionFactor,
  };
}

/**
 * Largest time step of the explicit (forward Euler) scheme that keeps it monotone, seconds:
 *
 *   Δt ≤ 1 / (2α·(1/hx² + 1/hy² + 1/hz²) + f_max·ω_b·ρ_b·c_b / (ρc)),
 *
 * α = k/(ρc), h in metres, f_max the largest perfusion factor. At this bound the weight of a
 * voxel's own temperature in its update, 1 − 2αΔtΣ1/h² − f·ω_b·ρ_b·c_b·Δt/(ρc), is still ≥ 0:
 * every new temperature is a weighted mean of old ones plus the source, so no spurious
 * oscillation and no new extremum can appear (discrete maximum principle). Von Neumann
 * stability alone would allow twice this step. Perfusion that falls with damage only lowers
 * the sum, so the bound holds throughout.
 */
export function stableTimeStepS(
  grid: Readonly<BioheatGrid>,
  tissue: Readonly<TissueProperties> = LIVER_TISSUE,
  maxPerfusionFactor = 1,
): number {
  const alpha = thermalDiffusivityM2PerS(tissue);
  const inverseSquares = grid.spacingMm.reduce((sum, h) => sum + 1 / (h / 1000) ** 2, 0);
  const perfusionRate =
    (maxPerfusionFactor * tissue.perfusionPerS * tissue.bloodHeatCapacityJPerM3K) /
    (tissue.densityKgPerM3 * tissue.specificHeatJPerKgK);
  return 1 / (2 * alpha * inverseSquares + perfusionRate);
}
