/**
 * What a label map holds for the assessment: which structure kind each label value stands for,
 * and for each labelled structure its voxel count and bounding box on the series grid.
 */
import { maxLabelValue, structureKinds, type StructureKind } from '../api/structures';
import type { GridDimensions } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import type { AssessmentStructure } from './assessment-input';

/** A small number for each kind (its place in `structureKinds` plus 1); 0 stands for none. */
export function kindCode(kind: StructureKind): number {
  return structureKinds.indexOf(kind) + 1;
}

/** The kind of a non-zero kind code. */
export function kindOfCode(code: number): StructureKind {
  const kind = structureKinds[code - 1];
  if (kind === undefined) throw new RangeError(`no structure kind has code ${code}`);
  return kind;
}

/** Voxels of one label value: how many, and their bounding box (voxel indices, inclusive). */
export interface LabelStatistics {
  labelValue: number;
  voxelCount: number;
  minVoxel: Vec3;
  maxVoxel: Vec3;
}

export interface LabelInventory {
  /** `kindCodeOfLabel[value]`: the kind code of each label value 0…65535, 0 when none. */
  kindCodeOfLabel: Uint8Array;
  /** Label values of structures with a kind that hold at least one voxel. */
  statistics: Map<number, LabelStatistics>;
  /** Kinds with at least one voxel, in the order of `structureKinds`. */
  kindsPresent: StructureKind[];
  /** Label values of each kind present, ascending. */
  labelsOfKind: Map<StructureKind, number[]>;
}

/**
 * One pass over the label map (index i + nx·(j + ny·k) on a grid of `dimensions`) taking the
 * inventory; structures without a kind are left out.
 */
export function takeLabelInventory(
  labelMap: Uint8Array | Uint16Array,
  dimensions: Readonly<GridDimensions>,
  structures: readonly AssessmentStructure[],
): LabelInventory {
  const kindCodeOfLabel = new Uint8Array(maxLabelValue + 1);
  const slotOfLabel = new Int32Array(maxLabelValue + 1).fill(-1);
  const labelled = structures.filter(
    (structure): structure is AssessmentStructure & { kind: StructureKind } =>
      structure.kind !== null,
  );
  labelled.forEach((structure, slot) => {
    kindCodeOfLabel[structure.labelValue] = kindCode(structure.kind);
    slotOfLabel[structure.labelValue] = slot;
  });
  const slots = labelled.length;
  const counts = new Float64Array(slots);
  const low = new Int32Array(3 * slots).fill(2 ** 30);
  const high = new Int32Array(3 * slots).fill(-1);
  const [nx, ny, nz] = dimensions;
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        const value = labelMap[index];
        if (value === 0) continue;
        const slot = slotOfLabel[value];
        if (slot < 0) continue;
        counts[slot]++;
        const at = 3 * slot;
        if (i < low[at]) low[at] = i;
        if (i > high[at]) high[at] = i;
        if (j < low[at + 1]) low[at + 1] = j;
        if (j > high[at + 1]) high[at + 1] = j;
        if (k < low[at + 2]) low[at + 2] = k;
        if (k > high[at + 2]) high[at + 2] = k;
      }
    }
  }
  const statistics = new Map<number, LabelStatistics>();
  const labelsOfKind = new Map<StructureKind, number[]>();
  labelled.forEach((structure, slot) => {
    if (counts[slot] === 0) return;
    const at = 3 * slot;
    statistics.set(structure.labelValue, {
      labelValue: structure.labelValue,
      voxelCount: counts[slot],
      minVoxel: [low[at], low[at + 1], low[at + 2]],
      maxVoxel: [high[at], high[at + 1], high[at + 2]],
    });
    const { kind } = structure;
    labelsOfKind.set(kind, [...(labelsOfKind.get(kind) ?? []), structure.labelValue]);
  });
  for (const values of labelsOfKind.values()) values.sort((a, b) => a - b);
  return {
    kindCodeOfLabel,
    statistics,
    kindsPresent: structureKinds.filter((kind) => labelsOfKind.has(kind)),
    labelsOfKind,
  };
}

/** The statistics of a label value present in the inventory; a RangeError for any other. */
export function statisticsOf(inventory: LabelInventory, labelValue: number): LabelStatistics {
  const statistics = inventory.statistics.get(labelValue);
  if (!statistics) throw new RangeError(`label ${labelValue} holds no voxel of a known kind`);
  return statistics;
}
