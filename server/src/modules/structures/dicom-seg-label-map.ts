/**
 * A DICOM Segmentation (SEG: Segmentation Storage, BINARY or FRACTIONAL) as a label map on a
 * series' own grid: each voxel holds the number of the segment that covers it, 0 elsewhere —
 * the form `readNiftiLabelMap` gives. Each frame is placed on a slice of the series by its Image
 * Position (Patient), and must lie on the series' grid: the same rows and columns, orientation
 * and pixel spacing, every pixel centre within GRID_MATCH_TOLERANCE_MM of the series voxel it
 * becomes (the rule of the NIfTI import). Nothing is resampled. Segments that overlap are
 * resolved by kind and reported (`segment-overlap.ts`). Pure and synchronous: it runs in
 * the SEG reading worker (`dicom-seg-read.worker.ts`); nothing here writes or logs.
 */
import {
  lpsToVoxel,
  vector3,
  voxelToLps,
  type SegmentOverlap,
  type StructureKind,
  type Vec3,
  type VolumeGeometry,
} from '@emberline/shared';
import {
  readSegmentationAttributes,
  type FrameAttributes,
  type SegmentationAttributes,
} from './dicom-seg-dataset';
import { GRID_MATCH_TOLERANCE_MM } from './grid-match';
import { suggestedKind } from './segment-kind';
import {
  compareSegments,
  describeOverlap,
  kindOfSegment,
  noKindHints,
  type RankedSegment,
  type SegmentKindHints,
} from './segment-overlap';
import { StructureRefusal } from './structure-refusal';

/** The longest structure name (the `structure.name` column; PATCH allows as much). */
export const maxStructureNameLength = 80;

export interface DicomSegment {
  /** The label value its voxels hold. */
  segmentNumber: number;
  /** Segment Label, trimmed, control characters removed, at most 80 characters; null if blank. */
  name: string | null;
  /** The kind its description names (`suggestedKind`), or null. */
  suggestedKind: StructureKind | null;
}

export interface DicomSegLabelMap {
  /** Segment numbers 0…65535 on the series' grid, i fastest. */
  labels: Uint16Array<ArrayBuffer>;
  /** Every segment the Segment Sequence describes, with voxels or not. */
  segments: DicomSegment[];
  /** Voxels two segments claimed, each pair once, as resolved. */
  overlaps: SegmentOverlap[];
}

/** True for a DICOM Part 10 file: 128-byte preamble, then `DICM` (PS3.10 7.1). */
export function isDicomPart10(bytes: Uint8Array): boolean {
  return (
    bytes.length >= 132 &&
    bytes[128] === 0x44 &&
    bytes[129] === 0x49 &&
    bytes[130] === 0x43 &&
    bytes[131] === 0x4d
  );
}

/** Segment Label as a structure name: free text, so only trimmed and bounded, never parsed. */
export function structureNameOf(label: string): string | null {
  // eslint-disable-next-line no-control-regex
  const clean = label.replace(/[\u0000-\u001f\u007f-\u009f]+/g, ' ').replace(/\s+/g, ' ');
  const name = Array.from(clean.trim()).slice(0, maxStructureNameLength).join('').trim();
  return name === '' ? null : name;
}

const mm = (value: number) => value.toFixed(2);
const point = (value: Readonly<Vec3>) => `(${value.map(mm).join(', ')})`;
const direction = (value: Readonly<Vec3>) =>
  value.map((component) => Number(component.toFixed(4))).join(', ');
const notResampled = 'Import a segmentation drawn on this series (it is not resampled).';
const mismatch = (detail: string) =>
  new StructureRefusal(400, 'grid-mismatch', `${detail} ${notResampled}`);

/** The slice k of the series a frame lies on; a 400 naming what differs otherwise. */
function sliceOfFrame(frame: FrameAttributes, frameNumber: number, series: VolumeGeometry) {
  const [nx, ny, nz] = series.dimensions;
  const [spacingI, spacingJ] = series.spacingMm;
  const [seriesRow, seriesColumn] = series.direction;
  const label = `Frame ${frameNumber}`;

  const drift = Math.max(
    vector3.distance(frame.rowDirection, seriesRow) * spacingI * (nx - 1),
    vector3.distance(frame.columnDirection, seriesColumn) * spacingJ * (ny - 1),
  );
  if (!(drift <= GRID_MATCH_TOLERANCE_MM)) {
    throw mismatch(
      `${label} has Image Orientation (Patient) ${direction(frame.rowDirection)}, ` +
        `${direction(frame.columnDirection)}; the series has ${direction(seriesRow)}, ` +
        `${direction(seriesColumn)}. Across a slice that puts its pixels up to ${mm(drift)} mm ` +
        `from the series' voxels (at most ${GRID_MATCH_TOLERANCE_MM} mm allowed).`,
    );
  }
  // Pixel Spacing is [between rows (Δj), between columns (Δi)] (DICOM PS3.3 10.7.1.3).
  const [rowSpacing, columnSpacing] = frame.pixelSpacingMm;
  const spread = Math.max(
    Math.abs(columnSpacing - spacingI) * (nx - 1),
    Math.abs(rowSpacing - spacingJ) * (ny - 1),
  );
  if (!(spread <= GRID_MATCH_TOLERANCE_MM)) {
    throw mismatch(
      `${label} has Pixel Spacing (0028,0030) ${rowSpacing}\\${columnSpacing} mm; the series' ` +
        `is ${Number(spacingJ.toFixed(6))}\\${Number(spacingI.toFixed(6))} mm. Across a slice ` +
        `that puts its pixels up to ${mm(spread)} mm from the series' voxels (at most ` +
        `${GRID_MATCH_TOLERANCE_MM} mm allowed).`,
    );
  }
  const k = Math.round(lpsToVoxel(series, frame.positionLps)[2]);
  if (!(k >= 0 && k < nz)) {
    throw mismatch(
      `${label} lies at LPS ${point(frame.positionLps)} mm, outside the series' slices (the ` +
        `first at ${point(voxelToLps(series, [0, 0, 0]))} mm, the last at ` +
        `${point(voxelToLps(series, [0, 0, nz - 1]))} mm).`,
    );
  }
  const expected = voxelToLps(series, [0, 0, k]);
  const offsetMm = vector3.distance(frame.positionLps, expected);
  if (!(offsetMm <= GRID_MATCH_TOLERANCE_MM)) {
    throw mismatch(
      `${label} has its first pixel at LPS ${point(frame.positionLps)} mm (Image Position ` +
        `(Patient)); the nearest voxel of the series, (0, 0, ${k}), lies at ${point(expected)} ` +
        `mm, ${mm(offsetMm)} mm away (at most ${GRID_MATCH_TOLERANCE_MM} mm allowed).`,
    );
  }
  // The checks above bound each cause alone; the corners bound them together.
  for (const i of [0, nx - 1]) {
    for (const j of [0, ny - 1]) {
      let found = vector3.addScaled(frame.positionLps, frame.rowDirection, columnSpacing * i);
      found = vector3.addScaled(found, frame.columnDirection, rowSpacing * j);
      const corner = voxelToLps(series, [i, j, k]);
      const cornerOffsetMm = vector3.distance(found, corner);
      if (!(cornerOffsetMm <= GRID_MATCH_TOLERANCE_MM)) {
        throw mismatch(
          `${label}'s pixel (${i}, ${j}) lies at LPS ${point(found)} mm; the series' voxel ` +
            `(${i}, ${j}, ${k}) at ${point(corner)} mm, ${mm(cornerOffsetMm)} mm away (at most ` +
            `${GRID_MATCH_TOLERANCE_MM} mm allowed).`,
        );
      }
    }
  }
  return k;
}

/**
 * Calls `visit` with the index (within the frame) of each pixel the frame marks. BINARY: 1 bit a
 * pixel, the first pixel in the least significant bit, frames following one another bit by bit
 * with no padding (DICOM PS3.5 8.1.1, PS3.3 C.8.20.2). FRACTIONAL: 1 byte a pixel, counted in
 * when it is at least half the Maximum Fractional Value.
 */
function forEachMarkedPixel(
  attributes: SegmentationAttributes,
  frameIndex: number,
  visit: (pixel: number) => void,
): void {
  const { pixels, maxFractionalValue } = attributes;
  const isBinary = attributes.segmentationType === 'BINARY';
  const frameSize = attributes.rows * attributes.columns;
  const firstBit = frameIndex * frameSize;
  for (let pixel = 0; pixel < frameSize; pixel++) {
    if (isBinary) {
      const bit = firstBit + pixel;
      const byte = pixels[bit >>> 3];
      // A whole empty byte: its eight pixels (some may be the next frame's: that one reads
      // them itself) are outside.
      if (byte === 0 && (bit & 7) === 0) {
        pixel += 7;
        continue;
      }
      if (((byte >>> (bit & 7)) & 1) === 1) visit(pixel);
    } else if (2 * pixels[firstBit + pixel] >= maxFractionalValue) {
      visit(pixel);
    }
  }
}

/** Voxels one segment lost to another that ranks before it, and the first of them. */
interface PairOverlap {
  kept: number;
  lost: number;
  count: number;
  firstVoxel: Vec3;
}

/**
 * Writes the frames' pixels into `labels`, the frames of the segment that keeps overlapped
 * voxels (`compareSegments`) first, so that a voxel a later frame claims is counted against the
 * segment that keeps it and never overwritten.
 */
function paintFrames(
  attributes: SegmentationAttributes,
  slices: readonly number[],
  ranked: ReadonlyMap<number, RankedSegment>,
  labels: Uint16Array,
  nx: number,
  ny: number,
): PairOverlap[] {
  const segmentOf = (frameIndex: number) => {
    const found = ranked.get(attributes.frames[frameIndex].segmentNumber);
    if (!found) throw new Error('a frame of an undescribed segment was not refused');
    return found;
  };
  const order = attributes.frames
    .map((_, frameIndex) => frameIndex)
    .sort((a, b) => compareSegments(segmentOf(a), segmentOf(b)) || a - b);
  const pairs = new Map<number, PairOverlap>();
  for (const frameIndex of order) {
    const segment = attributes.frames[frameIndex].segmentNumber;
    const sliceOffset = slices[frameIndex] * nx * ny;
    forEachMarkedPixel(attributes, frameIndex, (pixel) => {
      const offset = sliceOffset + pixel;
      const held = labels[offset];
      if (held === 0 || held === segment) {
        labels[offset] = segment;
        return;
      }
      const key = held * 65_536 + segment;
      const pair = pairs.get(key);
      if (pair) pair.count += 1;
      else {
        pairs.set(key, {
          kept: held,
          lost: segment,
          count: 1,
          firstVoxel: [pixel % nx, Math.floor(pixel / nx), slices[frameIndex]],
        });
      }
    });
  }
  return [...pairs.values()].sort((a, b) => a.kept - b.kept || a.lost - b.lost);
}

/** Pixels each segment's frames mark, overlaps included (the tie-break of equal ranks). */
function claimedCounts(attributes: SegmentationAttributes): Map<number, number> {
  const counts = new Map<number, number>();
  attributes.frames.forEach((frame, frameIndex) => {
    let count = counts.get(frame.segmentNumber) ?? 0;
    forEachMarkedPixel(attributes, frameIndex, () => {
      count += 1;
    });
    counts.set(frame.segmentNumber, count);
  });
  return counts;
}

/**
 * The label map of a DICOM SEG file on the series' grid, with its segments' names and
 * suggested kinds, overlapping segments resolved by kind (`segment-overlap.ts`, with the kinds
 * `kindHints` and the descriptions give) and reported; throws a StructureRefusal naming the
 * fault, and for an overlap of a segment whose kind is unknown.
 */
export function readDicomSegLabelMap(
  bytes: Uint8Array,
  series: VolumeGeometry,
  kindHints: SegmentKindHints = noKindHints,
): DicomSegLabelMap {
  const attributes = readSegmentationAttributes(bytes);
  const [nx, ny, nz] = series.dimensions;
  if (attributes.columns !== nx || attributes.rows !== ny) {
    throw mismatch(
      `The segmentation's frames are ${attributes.columns} columns × ${attributes.rows} rows; ` +
        `the series' slices are ${nx} × ${ny}.`,
    );
  }
  const described = new Set(attributes.segments.map((segment) => segment.segmentNumber));
  const slices = attributes.frames.map((frame, index) => {
    if (!described.has(frame.segmentNumber)) {
      throw new StructureRefusal(
        400,
        'segments',
        `Frame ${index + 1} belongs to segment ${frame.segmentNumber}, which the Segment ` +
          'Sequence (0062,0002) does not describe.',
      );
    }
    return sliceOfFrame(frame, index + 1, series);
  });
  const segments = attributes.segments.map((segment) => {
    const name = structureNameOf(segment.label);
    return {
      segmentNumber: segment.segmentNumber,
      name,
      suggestedKind: suggestedKind({ label: name ?? '', type: segment.type }),
    };
  });
  const claimed = claimedCounts(attributes);
  const ranked = new Map(
    segments.map((segment) => [
      segment.segmentNumber,
      {
        segmentNumber: segment.segmentNumber,
        kind: kindOfSegment(segment.segmentNumber, segment.suggestedKind, kindHints),
        claimedCount: claimed.get(segment.segmentNumber) ?? 0,
      },
    ]),
  );
  const labels = new Uint16Array(nx * ny * nz);
  const pairs = paintFrames(attributes, slices, ranked, labels, nx, ny);
  const nameOf = (segmentNumber: number) =>
    segments.find((segment) => segment.segmentNumber === segmentNumber)?.name ??
    `segment ${segmentNumber}`;
  const overlaps = pairs.map((pair) => {
    const keptKind = ranked.get(pair.kept)?.kind ?? null;
    const lostKind = ranked.get(pair.lost)?.kind ?? null;
    if (keptKind === null || lostKind === null) {
      const unnamed = lostKind === null ? pair.lost : pair.kept;
      throw new StructureRefusal(
        400,
        'segment-overlap',
        `Segments ${Math.min(pair.kept, pair.lost)} and ${Math.max(pair.kept, pair.lost)} ` +
          `both cover ${pair.count === 1 ? 'a voxel' : 'voxels'} (${pair.count} in all, the ` +
          `first at voxel (${pair.firstVoxel.join(', ')})). Overlaps are resolved by kind, and ` +
          `segment ${unnamed} has none Emberline recognises: name its kind in the field ` +
          `"labels" (e.g. {"${unnamed}":"liver"}), or make the segments exclusive, and import ` +
          'again.',
      );
    }
    return describeOverlap({
      keptSegment: pair.kept,
      keptName: nameOf(pair.kept),
      keptKind,
      lostSegment: pair.lost,
      lostName: nameOf(pair.lost),
      lostKind,
      voxelCount: pair.count,
    });
  });
  return { labels, segments, overlaps };
}
