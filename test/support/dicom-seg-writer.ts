/**
 * Writes DICOM Segmentation (SEG) files with dcmjs for the tests, for a series grid the test
 * gives: Segmentation Storage, BINARY (1-bit pixels packed by dcmjs' own `BitArray.pack`,
 * frames back to back with no padding, DICOM PS3.5 8.1.1) or FRACTIONAL (8-bit), one frame a
 * segment and slice that holds any of it, the segments described in the Segment Sequence, the
 * geometry in the shared and per-frame functional groups (DICOM PS3.3 C.8.20, C.7.6.16). Every
 * patient value is invented. Options move the written geometry off the series' grid.
 */
import dcmjs from 'dcmjs';
import type { Vec3 } from '@emberline/shared';

dcmjs.log.setLevel('error');

export const segmentationStorage = '1.2.840.10008.5.1.4.1.1.66.4';
export const explicitVrLittleEndian = '1.2.840.10008.1.2.1';
export const implicitVrLittleEndian = '1.2.840.10008.1.2';
/** Root of the UIDs written here (invented). */
const uidRoot = '1.2.826.0.1.3680043.10.99998';

let uidCounter = 0;
const newUid = () => `${uidRoot}.${++uidCounter}`;

/** The series grid the segmentation is drawn on (LPS, millimetres). */
export interface SegGrid {
  /** [columns, rows, slices]. */
  dimensions: [number, number, number];
  /** [Δi, Δj, Δk]. */
  spacingMm: Vec3;
  /** Centre of voxel (0, 0, 0). */
  originLps: Vec3;
  /** Unit vectors along i (row direction), j (column direction) and k. */
  direction: [Vec3, Vec3, Vec3];
}

export interface SegCode {
  codeValue: string;
  codingSchemeDesignator: string;
  codeMeaning: string;
}

export interface SegSegmentSpec {
  segmentNumber: number;
  label: string;
  /** Segmented Property Type; without one, "Tissue" (SCT 85756007) is written. */
  type?: SegCode;
}

export interface SegSpec {
  grid: SegGrid;
  segments: SegSegmentSpec[];
  /**
   * Per segment number, its voxels on the grid, i fastest: non-zero is inside (BINARY), or the
   * stored fraction 0…maxValue (FRACTIONAL).
   */
  masks: ReadonlyMap<number, ArrayLike<number>>;
  /** Frames segment by segment, slices ascending ('forward', the default), or the reverse. */
  frameOrder?: 'forward' | 'reverse';
  /** Writes a frame for every slice of every segment, empty or not. */
  hasEmptyFrames?: boolean;
  fractional?: { maxValue: number };
  transferSyntaxUid?: string;
  /** Geometry written instead of the grid's. */
  written?: {
    originShiftLps?: Vec3;
    /** [between rows, between columns], as Pixel Spacing (0028,0030) holds it. */
    pixelSpacingMm?: [number, number];
    rowDirection?: Vec3;
    columnDirection?: Vec3;
    columns?: number;
    rows?: number;
  };
  /** Attributes added to the data set (keywords → values), e.g. identifying ones. */
  extraAttributes?: Record<string, unknown>;
  /** Added to every item of the Segment Sequence (e.g. a free-text Segment Description). */
  extraSegmentAttributes?: Record<string, unknown>;
}

const ds = (value: number) => String(Number(value.toFixed(6)));
const addScaled = (a: Readonly<Vec3>, b: Readonly<Vec3>, factor: number): Vec3 => [
  a[0] + b[0] * factor,
  a[1] + b[1] * factor,
  a[2] + b[2] * factor,
];

/** Masks per segment number from a label map on the grid (value = segment number). */
export function masksFromLabels(
  labels: ArrayLike<number>,
  segmentNumbers: readonly number[],
): Map<number, Uint8Array> {
  const masks = new Map(segmentNumbers.map((number) => [number, new Uint8Array(labels.length)]));
  for (let offset = 0; offset < labels.length; offset++) {
    const mask = masks.get(labels[offset]);
    if (mask) mask[offset] = 1;
  }
  return masks;
}

interface Frame {
  segmentNumber: number;
  k: number;
  pixels: Uint8Array;
}

function framesOf(spec: SegSpec): Frame[] {
  const [nx, ny, nz] = spec.grid.dimensions;
  const sliceSize = nx * ny;
  const frames: Frame[] = [];
  for (const segment of spec.segments) {
    const mask = spec.masks.get(segment.segmentNumber);
    if (!mask) continue;
    for (let k = 0; k < nz; k++) {
      const pixels = new Uint8Array(sliceSize);
      let isEmpty = true;
      for (let p = 0; p < sliceSize; p++) {
        pixels[p] = mask[k * sliceSize + p];
        if (pixels[p] !== 0) isEmpty = false;
      }
      if (spec.hasEmptyFrames || !isEmpty) {
        frames.push({ segmentNumber: segment.segmentNumber, k, pixels });
      }
    }
  }
  return spec.frameOrder === 'reverse' ? frames.reverse() : frames;
}

/** The SEG as a DICOM Part 10 file (dcmjs DicomDict.write). */
export function writeDicomSeg(spec: SegSpec): Uint8Array {
  const { grid, written = {} } = spec;
  const [nx, ny] = grid.dimensions;
  const columns = written.columns ?? nx;
  const rows = written.rows ?? ny;
  const frames = framesOf(spec);
  const [rowDirection, columnDirection] = [
    written.rowDirection ?? grid.direction[0],
    written.columnDirection ?? grid.direction[1],
  ];
  const pixelSpacing = written.pixelSpacingMm ?? [grid.spacingMm[1], grid.spacingMm[0]];
  const origin = addScaled(grid.originLps, written.originShiftLps ?? [0, 0, 0], 1);

  // Frames of another size (a refusal test) are cut or padded from the grid's.
  const resized = (pixels: Uint8Array) => {
    if (columns === nx && rows === ny) return pixels;
    const frame = new Uint8Array(columns * rows);
    for (let j = 0; j < Math.min(rows, ny); j++) {
      for (let i = 0; i < Math.min(columns, nx); i++) frame[i + columns * j] = pixels[i + nx * j];
    }
    return frame;
  };
  const allPixels = new Uint8Array(frames.length * columns * rows);
  frames.forEach((frame, index) => allPixels.set(resized(frame.pixels), index * columns * rows));
  const pixelData = spec.fractional ? allPixels : dcmjs.data.BitArray.pack(allPixels);

  const sopInstanceUid = newUid();
  const meta = dcmjs.data.DicomMetaDictionary.denaturalizeDataset({
    FileMetaInformationVersion: new Uint8Array([0, 1]).buffer,
    MediaStorageSOPClassUID: segmentationStorage,
    MediaStorageSOPInstanceUID: sopInstanceUid,
    TransferSyntaxUID: spec.transferSyntaxUid ?? explicitVrLittleEndian,
    ImplementationClassUID: `${uidRoot}.0`,
    ImplementationVersionName: 'EMBERLINE_TEST',
  });
  const code = (value: SegCode) => ({
    CodeValue: value.codeValue,
    CodingSchemeDesignator: value.codingSchemeDesignator,
    CodeMeaning: value.codeMeaning,
  });
  const dataset: Record<string, unknown> = {
    SpecificCharacterSet: 'ISO_IR 192',
    SOPClassUID: segmentationStorage,
    SOPInstanceUID: sopInstanceUid,
    StudyInstanceUID: newUid(),
    SeriesInstanceUID: newUid(),
    FrameOfReferenceUID: newUid(),
    Modality: 'SEG',
    SeriesNumber: '300',
    InstanceNumber: '1',
    ImageType: ['DERIVED', 'PRIMARY'],
    ContentLabel: 'TEST_SEG',
    SamplesPerPixel: 1,
    PhotometricInterpretation: 'MONOCHROME2',
    Rows: rows,
    Columns: columns,
    NumberOfFrames: String(frames.length),
    BitsAllocated: spec.fractional ? 8 : 1,
    BitsStored: spec.fractional ? 8 : 1,
    HighBit: spec.fractional ? 7 : 0,
    PixelRepresentation: 0,
    LossyImageCompression: '00',
    SegmentationType: spec.fractional ? 'FRACTIONAL' : 'BINARY',
    ...(spec.fractional
      ? {
          SegmentationFractionalType: 'PROBABILITY',
          MaximumFractionalValue: spec.fractional.maxValue,
        }
      : {}),
    SegmentSequence: spec.segments.map((segment) => ({
      SegmentNumber: segment.segmentNumber,
      SegmentLabel: segment.label,
      SegmentAlgorithmType: 'MANUAL',
      // Anatomical Structure (SCT 91723000), DICOM CID 7150.
      SegmentedPropertyCategoryCodeSequence: [
        code({
          codeValue: '91723000',
          codingSchemeDesignator: 'SCT',
          codeMeaning: 'Anatomical Structure',
        }),
      ],
      SegmentedPropertyTypeCodeSequence: [
        code(
          segment.type ?? {
            codeValue: '85756007',
            codingSchemeDesignator: 'SCT',
            codeMeaning: 'Tissue',
          },
        ),
      ],
      ...spec.extraSegmentAttributes,
    })),
    SharedFunctionalGroupsSequence: [
      {
        PlaneOrientationSequence: [
          { ImageOrientationPatient: [...rowDirection, ...columnDirection].map(ds) },
        ],
        PixelMeasuresSequence: [
          {
            PixelSpacing: pixelSpacing.map(ds),
            SliceThickness: ds(grid.spacingMm[2]),
            SpacingBetweenSlices: ds(grid.spacingMm[2]),
          },
        ],
      },
    ],
    PerFrameFunctionalGroupsSequence: frames.map((frame) => ({
      FrameContentSequence: [{ DimensionIndexValues: [frame.segmentNumber, frame.k + 1] }],
      PlanePositionSequence: [
        {
          ImagePositionPatient: addScaled(
            origin,
            grid.direction[2],
            grid.spacingMm[2] * frame.k,
          ).map(ds),
        },
      ],
      SegmentIdentificationSequence: [{ ReferencedSegmentNumber: frame.segmentNumber }],
    })),
    ...spec.extraAttributes,
    PixelData: [pixelData.slice().buffer],
    _vrMap: { PixelData: 'OB' },
  };
  const dict = new dcmjs.data.DicomDict(meta);
  dict.dict = dcmjs.data.DicomMetaDictionary.denaturalizeDataset(dataset);
  return new Uint8Array(dict.write());
}
