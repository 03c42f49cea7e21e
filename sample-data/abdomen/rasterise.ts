/**
 * Turns the analytic phantom into voxels: a voxel takes the tissue and label of the last layer
 * whose solid holds its centre, then noise is added to its HU. Pure: arrays in, arrays out.
 */
import { indexRangeOf, voxelCount, voxelOffset, type CtGrid } from './grid';
import type { Layer } from './phantom';
import type { SeededRandom } from './rng';
import type { Solid } from './solids';
import { STORED_HU_RANGE, TISSUE_HU } from './tissues';

export interface PaintedVolume {
  /** Nominal HU of each voxel, i fastest, then j, then k. */
  nominalHu: Int16Array;
  /** Label value of each voxel, same order. */
  labels: Uint8Array;
}

/** Paints the layers in order over air. */
export function paintLayers(grid: Readonly<CtGrid>, layers: readonly Layer[]): PaintedVolume {
  const nominalHu = new Int16Array(voxelCount(grid)).fill(TISSUE_HU.air);
  const labels = new Uint8Array(voxelCount(grid));
  for (const layer of layers) {
    for (const piece of layer.pieces) {
      forEachVoxelInside(grid, piece, (offset) => {
        nominalHu[offset] = layer.hu;
        labels[offset] = layer.labelValue;
      });
    }
  }
  return { nominalHu, labels };
}

/** Calls `visit` with the offset of every voxel whose centre lies in the solid. */
export function forEachVoxelInside(
  grid: Readonly<CtGrid>,
  solid: Solid,
  visit: (offset: number) => void,
): void {
  const range = indexRangeOf(grid, solid.boundsMm);
  const [originX, originY, originZ] = grid.originLps;
  for (let k = range.kLow; k <= range.kHigh; k++) {
    const z = originZ + grid.sliceSpacingMm * k;
    for (let j = range.jLow; j <= range.jHigh; j++) {
      const y = originY + grid.rowSpacingMm * j;
      for (let i = range.iLow; i <= range.iHigh; i++) {
        const x = originX + grid.columnSpacingMm * i;
        if (solid.contains(x, y, z)) visit(voxelOffset(grid, i, j, k));
      }
    }
  }
}

/**
 * HU with Gaussian-like white noise of the given standard deviation, rounded to whole HU and
 * clamped to what a CT stores (−1024…3071).
 */
export function addNoise(
  nominalHu: Int16Array,
  random: SeededRandom,
  standardDeviationHu: number,
): Int16Array {
  const noisyHu = new Int16Array(nominalHu.length);
  for (let offset = 0; offset < nominalHu.length; offset++) {
    const hu = Math.round(nominalHu[offset] + standardDeviationHu * random.nextGaussianLike());
    noisyHu[offset] = Math.min(STORED_HU_RANGE.highest, Math.max(STORED_HU_RANGE.lowest, hu));
  }
  return noisyHu;
}

/** Number of voxels of each label value, indexed by the value (0…255). */
export function countLabels(labels: Uint8Array): number[] {
  const counts = new Array<number>(256).fill(0);
  for (const value of labels) counts[value]++;
  return counts;
}
