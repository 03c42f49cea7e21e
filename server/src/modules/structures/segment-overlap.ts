/**
 * Which segment of a DICOM SEG keeps a voxel two segments claim. A label map holds one structure
 * a voxel, and segmentation tools commonly draw a tumour or a vessel inside the liver that holds
 * it, so the structure inside wins: first the tumour, then vessels and ducts, then other organs,
 * then the liver, and the skin (the body's outline, which holds everything) last; between two
 * segments of the same rank the smaller (the one more likely inside the other) wins, then the
 * lower segment number. Common practice of label-map tools, chosen here, not from a standard
 * (DICOM PS3.3 C.8.20 lets SEG segments overlap and says nothing of precedence).
 *
 * The liver's union is not lost for the assessment: the engine counts a tumour voxel, and a run
 * of vessel or duct voxels between hepatic ones, as inside the liver when it counts capsule
 * crossings, and liver parenchyma is the liver label alone (shared/src/assessment/path-profile.ts).
 */
import {
  structureKindLabels,
  type SegmentOverlap,
  type StructureKind,
  type StructureLabels,
} from '@emberline/shared';

/** Rank of each kind: the lower keeps an overlapped voxel. */
const kindRanks: Readonly<Record<StructureKind, number>> = {
  tumour: 0,
  'portal-vein': 1,
  'hepatic-vein': 1,
  'hepatic-artery': 1,
  'bile-duct': 1,
  gallbladder: 2,
  bowel: 2,
  stomach: 2,
  lung: 2,
  heart: 2,
  kidney: 2,
  bone: 2,
  liver: 3,
  skin: 4,
};

/** Rank of a segment without a kind: last, and any overlap of it is refused. */
const unknownRank = 9;

/** What the server knows of each segment's kind before the file is read. */
export interface SegmentKindHints {
  /** The import's `labels` field: label value → kind. */
  named: StructureLabels;
  /** The kinds the series' rows had, by label value (a second import). */
  previous: Record<string, StructureKind | null>;
}

export const noKindHints: SegmentKindHints = { named: {}, previous: {} };

/**
 * A SEG segment's kind: the `labels` field, else what its description suggests, else the kind
 * its row had (a second import), else none. The import stores the same kind on the row.
 */
export function kindOfSegment(
  segmentNumber: number,
  suggested: StructureKind | null,
  hints: SegmentKindHints,
): StructureKind | null {
  const key = String(segmentNumber);
  return hints.named[key] ?? suggested ?? hints.previous[key] ?? null;
}

export interface RankedSegment {
  segmentNumber: number;
  kind: StructureKind | null;
  /** Pixels the segment's frames mark, before any overlap is resolved. */
  claimedCount: number;
}

/** Negative when `a` keeps a voxel both claim, positive when `b` does. */
export function compareSegments(a: RankedSegment, b: RankedSegment): number {
  const rank = (segment: RankedSegment) =>
    segment.kind === null ? unknownRank : kindRanks[segment.kind];
  return rank(a) - rank(b) || a.claimedCount - b.claimedCount || a.segmentNumber - b.segmentNumber;
}

const quoted = (name: string) => `“${name}”`;
const kindWord = (kind: StructureKind) => structureKindLabels[kind].toLowerCase();

/** The overlap report of one pair, in the words the import shows. */
export function describeOverlap(overlap: Omit<SegmentOverlap, 'message'>): SegmentOverlap {
  const count = overlap.voxelCount.toLocaleString('en-GB');
  const voxels = overlap.voxelCount === 1 ? '1 voxel' : `${count} voxels`;
  const why =
    kindRanks[overlap.keptKind] < kindRanks[overlap.lostKind]
      ? `${kindWord(overlap.keptKind)} kept (it ranks before ${kindWord(overlap.lostKind)})`
      : `${quoted(overlap.keptName)} kept (the smaller of two of the same rank)`;
  return {
    ...overlap,
    message:
      `Segment ${quoted(overlap.keptName)} overlapped ${quoted(overlap.lostName)} in ` +
      `${voxels}; ${why}.`,
  };
}
