/**
 * Which tumour structures a plan is judged on: for each applicator the tumour nearest its tip
 * (the tumour it is aimed at), and any other tumour the zone reaches. A tumour elsewhere in
 * the liver, untouched by the plan, is not counted as uncovered: a plan may treat one lesion
 * of several. Series grid; positions LPS, millimetres.
 */
import { lpsToVoxel, type VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import type { VoxelBox } from '../geometry/voxel-box';
import type { AssessmentStructure } from './assessment-input';
import { statisticsOf, type LabelInventory, type LabelStatistics } from './label-inventory';
import { tumourLabelOf } from './tumour-label';
import type { VoxelExtent } from './voxel-extent';

/** The extent of a label's voxels (continuous indices: the cells around its extreme centres). */
export function extentOfLabel(statistics: LabelStatistics): VoxelExtent {
  return {
    min: statistics.minVoxel.map((value) => value - 0.5) as Vec3,
    max: statistics.maxVoxel.map((value) => value + 0.5) as Vec3,
  };
}

/**
 * The tumour label whose voxel centres come nearest the tip (LPS, millimetres), by exhaustive
 * search within each tumour's bounding box; null without tumours.
 */
export function nearestTumourLabel(
  labelMap: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  inventory: LabelInventory,
  tipLps: Readonly<Vec3>,
): number | null {
  const tip = lpsToVoxel(geometry, tipLps);
  const [nx, ny] = geometry.dimensions;
  const [wi, wj, wk] = geometry.spacingMm;
  let best: number | null = null;
  let bestSquared = Infinity;
  for (const label of inventory.labelsOfKind.get('tumour') ?? []) {
    const statistics = inventory.statistics.get(label);
    if (!statistics) continue;
    const { minVoxel: low, maxVoxel: high } = statistics;
    for (let k = low[2]; k <= high[2]; k++) {
      const dz = (k - tip[2]) * wk;
      for (let j = low[1]; j <= high[1]; j++) {
        const dy = (j - tip[1]) * wj;
        const partial = dy * dy + dz * dz;
        if (partial >= bestSquared) continue;
        for (let i = low[0]; i <= high[0]; i++) {
          if (labelMap[i + nx * (j + ny * k)] !== label) continue;
          const dx = (i - tip[0]) * wi;
          const squared = dx * dx + partial;
          if (squared < bestSquared) {
            bestSquared = squared;
            best = label;
          }
        }
      }
    }
  }
  return best;
}

/** Tumour labels whose bounding box meets any of the extents (series voxel indices). */
export function tumourLabelsMeeting(
  inventory: LabelInventory,
  extents: readonly VoxelExtent[],
): number[] {
  return (inventory.labelsOfKind.get('tumour') ?? []).filter((label) => {
    const statistics = inventory.statistics.get(label);
    if (!statistics) return false;
    const own = extentOfLabel(statistics);
    return extents.some((extent) =>
      [0, 1, 2].every(
        (axis) => own.min[axis] <= extent.max[axis] && own.max[axis] >= extent.min[axis],
      ),
    );
  });
}

/** A tumour the plan is judged on, with its voxels' bounding box on a crop. */
export interface TreatedTumour {
  structureId: string;
  labelValue: number;
  /** How the board names it (`tumourLabelOf`): "segment VIII, 24 mm". */
  label: string;
  /** Bounding box of its voxels in crop voxel indices (inclusive, whole numbers). */
  extent: VoxelExtent;
}

/**
 * The tumours nearest each tip, and those of the candidates that some zone reaches (a zone
 * voxel of theirs on the crop), in the order of the structures.
 */
export function treatedTumours(
  structures: readonly AssessmentStructure[],
  inventory: LabelInventory,
  nearest: readonly number[],
  candidates: readonly number[],
  zoneMasks: Iterable<Uint8Array>,
  crop: { labels: Uint8Array | Uint16Array; box: VoxelBox },
): TreatedTumour[] {
  const treated = new Set(nearest);
  const isCandidate = new Uint8Array(65_536);
  for (const label of candidates) isCandidate[label] = 1;
  for (const mask of zoneMasks) {
    for (let index = 0; index < mask.length; index++) {
      if (mask[index] !== 0 && isCandidate[crop.labels[index]] !== 0)
        treated.add(crop.labels[index]);
    }
  }
  const start = crop.box.start;
  return structures
    .filter((structure) => structure.kind === 'tumour' && treated.has(structure.labelValue))
    .map((structure) => {
      const { minVoxel, maxVoxel } = statisticsOf(inventory, structure.labelValue);
      return {
        structureId: structure.id,
        labelValue: structure.labelValue,
        label: tumourLabelOf(structure),
        extent: {
          min: minVoxel.map((value, axis) => value - start[axis]) as Vec3,
          max: maxVoxel.map((value, axis) => value - start[axis]) as Vec3,
        },
      };
    });
}
