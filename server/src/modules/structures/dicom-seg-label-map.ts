/**
 * A DICOM Segmentation (SEG: Segmentation Storage, BINARY or FRACTIONAL) as a label map on a
 * series' own grid: each voxel holds the number of the segment that covers it, 0 elsewhere —
 * the form `readNiftiLabelMap` gives. Each frame is placed on a slice of the series by its Image
 * Position (Patient), and must lie on the series' grid: the same rows and columns, orientation
 * and pixel spacing, every pixel centre within GRID_MATCH_TOLERANCE_MM of the series voxel it
 * becomes (the rule of the NIfTI import). Nothing is resampled. Pure and synchronous: it runs in
 * the SEG reading worker (`dicom-seg-read.worker.ts`); nothing here writes or logs.
 */
import {
  lpsToVoxel,
  vector3,
  voxelToLps,
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

interface Overlap {
  count: number;
  first?: { segments: [number, number]; voxel: Vec3 };
}

/**
 * Writes the frames' pixels into `labels`. BINARY: 1 bit a pixel, the first pixel in the least
 * significant bit, frames following one another bit by bit with no padding (DICOM PS3.5 8.1.1,
 * PS3.3 C.8.20.2). FRACTIONAL: 1 byte a pixel, counted in when it is at least half the
 * Maximum Fractional Value. A voxel two segments claim is counted in `overlap`, never
 * overwritten.
 */
function paintFrames(
  attributes: SegmentationAttributes,
  slices: readonly number[],
  labels: Uint16Array,
  nx: number,
  ny: number,
): Overlap {
  const { pixels, frames, maxFractionalValue } = attributes;
  const isBinary = attributes.segmentationType === 'BINARY';
  const frameSize = attributes.rows * attributes.columns;
  const overlap: Overlap = { count: 0 };
  frames.forEach((frame, frameIndex) => {
    const segment = frame.segmentNumber;
    const sliceOffset = slices[frameIndex] * nx * ny;
    const firstBit = frameIndex * frameSize;
    for (let pixel = 0; pixel < frameSize; pixel++) {
      let isInside: boolean;
      if (isBinary) {
        const bit = firstBit + pixel;
        const byte = pixels[bit >>> 3];
        // A whole empty byte: its eight pixels (some may be the next frame's: that one reads
        // them itself) are outside.
        if (byte === 0 && (bit & 7) === 0) {
          pixel += 7;
          continue;
        }
        isInside = ((byte >>> (bit & 7)) & 1) === 1;
      } else {
        isInside = 2 * pixels[firstBit + pixel] >= maxFractionalValue;
      }
      if (!isInside) continue;
      const offset = sliceOffset + pixel;
      const held = labels[offset];
      if (held === 0 || held === segment) {
        labels[offset] = segment;
        continue;
      }
      overlap.count += 1;
      overlap.first ??= {
        segments: [Math.min(held, segment), Math.max(held, segment)],
        voxel: [pixel % nx, Math.floor(pixel / nx), slices[frameIndex]],
      };
    }
  });
  return overlap;
}

/**
 * The label map of a DICOM SEG file on the series' grid, with its segments' names and
 * suggested kinds; throws a StructureRefusal naming the fault.
 */
export function readDicomSegLabelMap(bytes: Uint8Array, series: VolumeGeometry): DicomSegLabelMap {
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
  const labels = new Uint16Array(nx * ny * nz);
  const overlap = paintFrames(attributes, slices, labels, nx, ny);
  if (overlap.first) {
    const [a, b] = overlap.first.segments;
    throw new StructureRefusal(
      400,
      'segment-overlap',
      `Segments ${a} and ${b} both cover ${overlap.count === 1 ? 'a voxel' : 'voxels'} ` +
        `(${overlap.count} in all, the first at voxel (${overlap.first.voxel.join(', ')})). ` +
        'A label map holds one structure a voxel: make the segments exclusive (take the ' +
        'smaller structure out of the larger) and import again.',
    );
  }
  return {
    labels,
    segments: attributes.segments.map((segment) => {
      const name = structureNameOf(segment.label);
      return {
        segmentNumber: segment.segmentNumber,
        name,
        suggestedKind: suggestedKind({ label: name ?? '', type: segment.type }),
      };
    }),
  };
}
