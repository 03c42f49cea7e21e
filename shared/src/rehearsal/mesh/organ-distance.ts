/**
 * The organ's signed distance φ, read anywhere near the lattice: negative inside, positive
 * outside, millimetres. φ comes from the exact Euclidean distance transforms of the mask and of
 * its complement (geometry/distance-transform.ts, Felzenszwalb & Huttenlocher, Theory of
 * Computing 2012;8:415), interpolated trilinearly between voxel centres. By the transform's
 * voxel-centre convention the zero level then runs along the faces of the organ's voxels —
 * the voxelised surface, its corners rounded by the interpolation.
 *
 * The field is computed on the lattice's box only, in slabs along k when that box is large, so
 * that the transforms' working memory stays bounded (`SLAB_VOXEL_BUDGET`); the values are kept
 * at 4 bytes a voxel.
 */
import { signedDistanceTransform } from '../../geometry/distance-transform';
import type { GridDimensions } from '../../geometry/patient-geometry';
import type { Vec3 } from '../../geometry/vector';

/** Largest number of voxels in one slab of the field (about 21 bytes each while computed). */
export const SLAB_VOXEL_BUDGET = 4_000_000;
/**
 * Slices a slab reaches beyond those it keeps. A kept value is exact whenever it does not
 * exceed its distance to the slab's faces (distance-transform.ts, `box`), so every value within
 * 4 slices of the surface is exact — all that the zero level and the crossings depend on, the
 * voxels next to a change of sign holding about one spacing. Farther values can only be too
 * large, never of the wrong sign: the mask reaches past the organ on i and j in every slab.
 */
const EXACT_MARGIN_VOXELS = 4;

export interface OrganDistanceInput {
  dimensions: Readonly<GridDimensions>;
  spacingMm: Readonly<Vec3>;
  isOrgan: (voxel: number) => boolean;
  /** Voxel index box (inclusive, may pass the grid's edges) where φ will be read. */
  low: Vec3;
  high: Vec3;
}

/** Reads φ (millimetres) at a position in voxel index space (i, j, k). */
export type DistanceSampler = (i: number, j: number, k: number) => number;

/**
 * The field over the box (one voxel wider all round), kept as one Float32Array of 4 bytes a
 * voxel. It is computed slab by slab along k, each slab padded by `EXACT_MARGIN_VOXELS` beyond
 * the slices it keeps, so that only one slab's working memory (`SLAB_VOXEL_BUDGET`) is needed at
 * a time.
 */
export class OrganDistance {
  readonly low: Vec3;
  readonly size: Vec3;
  private readonly values: Float32Array;

  constructor(input: OrganDistanceInput) {
    this.low = [
      Math.floor(input.low[0]) - 1,
      Math.floor(input.low[1]) - 1,
      Math.floor(input.low[2]) - 1,
    ];
    const high = [
      Math.ceil(input.high[0]) + 1,
      Math.ceil(input.high[1]) + 1,
      Math.ceil(input.high[2]) + 1,
    ];
    this.size = [high[0] - this.low[0] + 1, high[1] - this.low[1] + 1, high[2] - this.low[2] + 1];
    const plane = this.size[0] * this.size[1];
    this.values = new Float32Array(plane * this.size[2]);
    const pad = EXACT_MARGIN_VOXELS;
    const core = Math.max(pad, Math.floor(SLAB_VOXEL_BUDGET / plane) - 2 * pad);
    for (let coreLow = this.low[2]; coreLow <= high[2]; coreLow += core) {
      const coreHigh = Math.min(coreLow + core - 1, high[2]);
      const slabLow = Math.max(this.low[2], coreLow - pad);
      const slabHigh = Math.min(high[2], coreHigh + pad);
      const slab = slabField(
        input,
        [this.low[0], this.low[1], slabLow],
        [high[0], high[1], slabHigh],
      );
      const from = (coreLow - slabLow) * plane;
      this.values.set(
        slab.subarray(from, from + (coreHigh - coreLow + 1) * plane),
        (coreLow - this.low[2]) * plane,
      );
    }
  }

  /** φ, mm, at a position in voxel index space, trilinear, clamped to the box. */
  sample(i: number, j: number, k: number): number {
    const [sx, sy, sz] = this.size;
    const x = Math.min(Math.max(i - this.low[0], 0), sx - 1);
    const y = Math.min(Math.max(j - this.low[1], 0), sy - 1);
    const z = Math.min(Math.max(k - this.low[2], 0), sz - 1);
    const x0 = Math.min(Math.floor(x), sx - 2);
    const y0 = Math.min(Math.floor(y), sy - 2);
    const z0 = Math.min(Math.floor(z), sz - 2);
    const fx = x - x0;
    const fy = y - y0;
    const fz = z - z0;
    const v = this.values;
    const row = sx;
    const plane = sx * sy;
    const base = x0 + row * y0 + plane * z0;
    const c00 = v[base] + (v[base + 1] - v[base]) * fx;
    const c10 = v[base + row] + (v[base + row + 1] - v[base + row]) * fx;
    const c01 = v[base + plane] + (v[base + plane + 1] - v[base + plane]) * fx;
    const c11 = v[base + plane + row] + (v[base + plane + row + 1] - v[base + plane + row]) * fx;
    const c0 = c00 + (c10 - c00) * fy;
    const c1 = c01 + (c11 - c01) * fy;
    return c0 + (c1 - c0) * fz;
  }
}

/** The organ's mask on the box `low`…`high` (inclusive; zero beyond the grid) and its φ. */
function slabField(input: OrganDistanceInput, low: Vec3, high: Vec3): Float32Array {
  const size: Vec3 = [high[0] - low[0] + 1, high[1] - low[1] + 1, high[2] - low[2] + 1];
  const [nx, ny, nz] = input.dimensions;
  const mask = new Uint8Array(size[0] * size[1] * size[2]);
  let index = 0;
  for (let k = low[2]; k <= high[2]; k++) {
    for (let j = low[1]; j <= high[1]; j++) {
      for (let i = low[0]; i <= high[0]; i++, index++) {
        const isInGrid = i >= 0 && i < nx && j >= 0 && j < ny && k >= 0 && k < nz;
        if (isInGrid && input.isOrgan(i + nx * (j + ny * k))) mask[index] = 1;
      }
    }
  }
  return signedDistanceTransform(mask, size, input.spacingMm);
}
