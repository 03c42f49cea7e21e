/**
 * Reads the attributes of a DICOM Segmentation (SEG) instance that a label map needs, with
 * dicom-parser: the pixel description, the segments (Segment Sequence) and, for every frame,
 * its segment, Image Position (Patient), Image Orientation (Patient) and Pixel Spacing from the
 * per-frame or shared functional groups (DICOM PS3.3 C.7.6.16, C.8.20.2). Runs in the SEG
 * reading worker (`dicom-seg-read.worker.ts`), which bounds its time and memory. Nothing else of
 * the file is read: patient, study and free-text attributes are never looked at, kept or logged,
 * and no refusal quotes a value from the file but numbers and UIDs made of digits and dots.
 */
import dicomParser, { type DataSet } from 'dicom-parser';
import type { Vec3 } from '@emberline/shared';
import type { CodedConcept } from './segment-kind';
import { StructureRefusal } from './structure-refusal';

/** Segmentation Storage (DICOM PS3.4 B.5; from memory). */
export const segmentationStorageUid = '1.2.840.10008.5.1.4.1.1.66.4';
const implicitVrLittleEndian = '1.2.840.10008.1.2';
const explicitVrLittleEndian = '1.2.840.10008.1.2.1';

/** SOP classes a refusal may name (PS3.4 B.5, PS3.6 Annex A; from memory). */
const sopClassNames: Record<string, string> = {
  '1.2.840.10008.5.1.4.1.1.2': 'CT Image Storage',
  '1.2.840.10008.5.1.4.1.1.2.1': 'Enhanced CT Image Storage',
  '1.2.840.10008.5.1.4.1.1.4': 'MR Image Storage',
  '1.2.840.10008.5.1.4.1.1.4.1': 'Enhanced MR Image Storage',
  '1.2.840.10008.5.1.4.1.1.66.7': 'Label Map Segmentation Storage',
  '1.2.840.10008.5.1.4.1.1.481.3': 'RT Structure Set Storage (contours, not voxels)',
  '1.2.840.10008.5.1.4.1.1.88.11': 'Basic Text SR Storage',
  '1.2.840.10008.5.1.4.1.1.88.22': 'Enhanced SR Storage',
  '1.2.840.10008.5.1.4.1.1.88.33': 'Comprehensive SR Storage',
};

export interface SegmentAttributes {
  /** Segment Number (0062,0004): 1…65535, the label value it becomes. */
  segmentNumber: number;
  /** Segment Label (0062,0005), as read (untrimmed); '' when absent. */
  label: string;
  /** Segmented Property Type Code Sequence (0062,000F), its first item. */
  type: CodedConcept | null;
}

export interface FrameAttributes {
  /** Referenced Segment Number (0062,000B) of the frame's Segment Identification. */
  segmentNumber: number;
  /** Image Position (Patient) (0020,0032): the centre of the frame's first pixel, LPS mm. */
  positionLps: Vec3;
  /** Image Orientation (Patient) (0020,0037): row direction, then column direction, LPS. */
  rowDirection: Vec3;
  columnDirection: Vec3;
  /** Pixel Spacing (0028,0030): [between rows, between columns], millimetres. */
  pixelSpacingMm: [number, number];
}

export interface SegmentationAttributes {
  rows: number;
  columns: number;
  segmentationType: 'BINARY' | 'FRACTIONAL';
  /** Maximum Fractional Value (0062,000E) of a FRACTIONAL segmentation; 1 for BINARY. */
  maxFractionalValue: number;
  segments: SegmentAttributes[];
  /** In the order of the frames in Pixel Data. */
  frames: FrameAttributes[];
  /** Pixel Data: exactly the bytes the frames need (1 bit or 8 bits a pixel). */
  pixels: Uint8Array;
}

const malformed = (detail: string) => new StructureRefusal(400, 'dicom-malformed', detail);
const truncated = (detail: string) => new StructureRefusal(400, 'dicom-truncated', detail);

function quotableUid(uid: string): string {
  return /^[0-9.]{1,64}$/.test(uid) ? uid : '(not a valid UID)';
}

/** dicom-parser throws strings, Errors and { exception, dataSet } objects. */
function innerError(error: unknown): unknown {
  return typeof error === 'object' && error !== null && 'exception' in error
    ? (error as { exception: unknown }).exception
    : error;
}

/** A refusal for whatever dicom-parser threw; its message is matched, never quoted. */
function refusalOfParserError(error: unknown, what: string): StructureRefusal {
  const inner = innerError(error);
  if (inner instanceof RangeError && /call stack/i.test(inner.message)) {
    return new StructureRefusal(
      400,
      'too-complex',
      'The DICOM file nests its attributes too deeply to be read.',
    );
  }
  const message = inner instanceof Error ? inner.message : String(inner);
  if (/past end|overread|overrun|greater than or equal to|eof/i.test(message)) {
    return truncated('The DICOM file is truncated: it ends inside an attribute.');
  }
  return malformed(`The DICOM file is damaged: ${what} cannot be read.`);
}

function checkTransferSyntax(bytes: Uint8Array): void {
  let meta: DataSet;
  try {
    meta = dicomParser.readPart10Header(bytes);
  } catch (error) {
    throw refusalOfParserError(error, 'its file meta information');
  }
  const uid = meta.string('x00020010')?.replace(/\0/g, '').trim();
  if (!uid) throw malformed('The DICOM file has no Transfer Syntax UID (0002,0010).');
  if (uid !== implicitVrLittleEndian && uid !== explicitVrLittleEndian) {
    throw new StructureRefusal(
      415,
      'dicom-transfer-syntax',
      `The segmentation uses the transfer syntax ${quotableUid(uid)}, which Emberline does not ` +
        `decode; write it uncompressed, as Explicit VR Little Endian (${explicitVrLittleEndian}) ` +
        `or Implicit VR Little Endian (${implicitVrLittleEndian}).`,
    );
  }
}

function parse(bytes: Uint8Array): DataSet {
  let dataSet: DataSet;
  try {
    dataSet = dicomParser.parseDicom(bytes);
  } catch (error) {
    throw refusalOfParserError(error, 'its data set');
  }
  if (dataSet.warnings.some((warning) => /eof/i.test(warning))) {
    throw truncated('The DICOM file is truncated: it ends inside a sequence.');
  }
  return dataSet;
}

interface Reader {
  dataSet: DataSet;
  isUtf8: boolean;
}

const tagName = (tag: string) => `(${tag.slice(1, 5)},${tag.slice(5)})`.toUpperCase();

/** A text value (first of several), decoded per Specific Character Set, trailing pad removed. */
function text(reader: Reader, dataSet: DataSet, tag: string): string | undefined {
  const element = dataSet.elements[tag];
  if (!element || element.length === 0) return undefined;
  const bytes = dataSet.byteArray.subarray(element.dataOffset, element.dataOffset + element.length);
  let value = '';
  if (reader.isUtf8) value = new TextDecoder('utf-8').decode(bytes);
  else
    for (let index = 0; index < bytes.length; index++) value += String.fromCharCode(bytes[index]);
  return value.split('\\')[0].replace(/[\0 ]+$/, '');
}

function items(dataSet: DataSet | undefined, tag: string): DataSet[] {
  return (dataSet?.elements[tag]?.items ?? [])
    .map((item) => item.dataSet)
    .filter((item): item is DataSet => item !== undefined);
}

function wholeNumber(dataSet: DataSet, tag: string, name: string, min: number, max: number) {
  const value = dataSet.elements[tag] ? dataSet.uint16(tag) : undefined;
  if (value === undefined || !Number.isInteger(value) || value < min || value > max) {
    throw malformed(
      `The segmentation lacks a valid ${name} ${tagName(tag)}: a whole number from ${min} to ` +
        `${max} is required.`,
    );
  }
  return value;
}

function decimals(dataSet: DataSet | undefined, tag: string, count: number) {
  if (!dataSet?.elements[tag]) return undefined;
  const values = Array.from({ length: count }, (_, index) => dataSet.floatString(tag, index));
  return values.every((value) => value !== undefined && Number.isFinite(value))
    ? (values as number[])
    : undefined;
}

function codedConcept(reader: Reader, item: DataSet | undefined): CodedConcept | null {
  if (!item) return null;
  return {
    codeValue: text(reader, item, 'x00080100') ?? '',
    codingSchemeDesignator: text(reader, item, 'x00080102') ?? '',
    codeMeaning: text(reader, item, 'x00080104') ?? '',
  };
}

function readSegments(reader: Reader): SegmentAttributes[] {
  const sequence = items(reader.dataSet, 'x00620002');
  if (sequence.length === 0) {
    throw new StructureRefusal(
      400,
      'segments',
      'The segmentation has no Segment Sequence (0062,0002): nothing says what its frames hold.',
    );
  }
  const seen = new Set<number>();
  return sequence.map((item, index) => {
    const segmentNumber = item.elements.x00620004 ? item.uint16('x00620004') : undefined;
    if (segmentNumber === undefined || segmentNumber < 1) {
      throw new StructureRefusal(
        400,
        'segments',
        `Item ${index + 1} of the Segment Sequence has no valid Segment Number (0062,0004): ` +
          'a whole number from 1 is required.',
      );
    }
    if (seen.has(segmentNumber)) {
      throw new StructureRefusal(
        400,
        'segments',
        `The Segment Sequence describes segment ${segmentNumber} twice.`,
      );
    }
    seen.add(segmentNumber);
    return {
      segmentNumber,
      label: text(reader, item, 'x00620005') ?? '',
      type: codedConcept(reader, items(item, 'x0062000f')[0]),
    };
  });
}

/** The first item of a functional group macro, per frame first, then shared. */
function functionalGroup(perFrame: DataSet, shared: DataSet | undefined, tag: string) {
  return items(perFrame, tag)[0] ?? items(shared, tag)[0];
}

function readFrames(reader: Reader, frameCount: number): FrameAttributes[] {
  const shared = items(reader.dataSet, 'x52009229')[0];
  const perFrame = items(reader.dataSet, 'x52009230');
  if (perFrame.length !== frameCount) {
    throw malformed(
      `The segmentation holds ${frameCount} frames but its Per-Frame Functional Groups ` +
        `Sequence (5200,9230) ${perFrame.length} items; each frame needs one.`,
    );
  }
  return perFrame.map((group, index) => {
    const frame = `Frame ${index + 1}`;
    const missing = (what: string) =>
      malformed(`${frame} has no ${what}, in its own functional groups or the shared ones.`);
    const identification = functionalGroup(group, shared, 'x0062000a');
    const segmentNumber =
      identification?.elements.x0062000b !== undefined
        ? identification.uint16('x0062000b')
        : undefined;
    if (segmentNumber === undefined) {
      throw missing('Referenced Segment Number (0062,000B) (Segment Identification Sequence)');
    }
    const position = decimals(functionalGroup(group, shared, 'x00209113'), 'x00200032', 3);
    if (!position) throw missing('Image Position (Patient) (0020,0032) (Plane Position Sequence)');
    const orientation = decimals(functionalGroup(group, shared, 'x00209116'), 'x00200037', 6);
    if (!orientation) {
      throw missing('Image Orientation (Patient) (0020,0037) (Plane Orientation Sequence)');
    }
    const spacing = decimals(functionalGroup(group, shared, 'x00289110'), 'x00280030', 2);
    if (!spacing || !(spacing[0] > 0) || !(spacing[1] > 0)) {
      throw missing('positive Pixel Spacing (0028,0030) (Pixel Measures Sequence)');
    }
    return {
      segmentNumber,
      positionLps: [position[0], position[1], position[2]],
      rowDirection: [orientation[0], orientation[1], orientation[2]],
      columnDirection: [orientation[3], orientation[4], orientation[5]],
      pixelSpacingMm: [spacing[0], spacing[1]],
    };
  });
}

function readPixelDescription(reader: Reader) {
  const { dataSet } = reader;
  const type = text(reader, dataSet, 'x00620001')?.trim();
  if (type !== 'BINARY' && type !== 'FRACTIONAL') {
    throw new StructureRefusal(
      415,
      'dicom-seg-type',
      type === 'LABELMAP'
        ? 'The segmentation is of type LABELMAP; Emberline reads BINARY and FRACTIONAL ' +
            'segmentations (Segmentation Storage).'
        : 'The segmentation has no Segmentation Type (0062,0001) of BINARY or FRACTIONAL.',
    );
  }
  const rows = wholeNumber(dataSet, 'x00280010', 'Rows', 1, 65_535);
  const columns = wholeNumber(dataSet, 'x00280011', 'Columns', 1, 65_535);
  const samples = dataSet.elements.x00280002 ? dataSet.uint16('x00280002') : 1;
  const bitsAllocated = wholeNumber(dataSet, 'x00280100', 'Bits Allocated', 1, 64);
  const bitsStored = dataSet.elements.x00280101 ? dataSet.uint16('x00280101') : bitsAllocated;
  const expectedBits = type === 'BINARY' ? 1 : 8;
  if (samples !== 1 || bitsAllocated !== expectedBits || bitsStored !== expectedBits) {
    throw new StructureRefusal(
      415,
      'dicom-seg-type',
      `A ${type} segmentation stores ${expectedBits} bit${expectedBits > 1 ? 's' : ''} a pixel, ` +
        `one sample (DICOM PS3.3 C.8.20.2); this one has Bits Allocated ${bitsAllocated}, Bits ` +
        `Stored ${bitsStored}, Samples per Pixel ${samples}.`,
    );
  }
  let maxFractionalValue = 1;
  if (type === 'FRACTIONAL') {
    maxFractionalValue = wholeNumber(dataSet, 'x0062000e', 'Maximum Fractional Value', 1, 255);
  }
  const frameCount = dataSet.elements.x00280008 ? dataSet.intString('x00280008') : 1;
  if (frameCount === undefined || !Number.isInteger(frameCount) || frameCount < 1) {
    throw malformed('The segmentation lacks a valid Number of Frames (0028,0008).');
  }
  return { segmentationType: type, rows, columns, maxFractionalValue, frameCount } as const;
}

function readPixels(dataSet: DataSet, neededBytes: number, description: string): Uint8Array {
  const element = dataSet.elements.x7fe00010;
  if (!element) throw malformed('The segmentation has no Pixel Data (7FE0,0010).');
  if (element.encapsulatedPixelData) {
    throw malformed('The segmentation holds encapsulated Pixel Data in an uncompressed syntax.');
  }
  const available = Math.min(element.length, dataSet.byteArray.length - element.dataOffset);
  if (available < neededBytes) {
    throw truncated(
      `The segmentation is truncated: its Pixel Data holds ${Math.max(available, 0)} bytes, ` +
        `where ${description} need ${neededBytes}.`,
    );
  }
  return dataSet.byteArray.subarray(element.dataOffset, element.dataOffset + neededBytes);
}

/**
 * The SEG attributes of a DICOM Part 10 file; throws a StructureRefusal for a file that is not
 * an uncompressed Segmentation Storage instance of BINARY or FRACTIONAL type.
 */
export function readSegmentationAttributes(bytes: Uint8Array): SegmentationAttributes {
  checkTransferSyntax(bytes);
  const dataSet = parse(bytes);
  const sopClass = (dataSet.string('x00080016') ?? dataSet.string('x00020002') ?? '')
    .replace(/\0/g, '')
    .trim();
  if (sopClass !== segmentationStorageUid) {
    const name = sopClassNames[sopClass];
    throw new StructureRefusal(
      415,
      'not-segmentation',
      `The DICOM file is not a segmentation: its SOP Class UID is ` +
        `${sopClass ? quotableUid(sopClass) : '(none)'}${name ? ` (${name})` : ''}. Import a ` +
        `DICOM SEG (Segmentation Storage, ${segmentationStorageUid}) or a NIfTI-1 label map; ` +
        'image series are uploaded as images.',
    );
  }
  const reader: Reader = {
    dataSet,
    isUtf8: /ISO_IR 192/.test(dataSet.string('x00080005') ?? ''),
  };
  try {
    const pixel = readPixelDescription(reader);
    const segments = readSegments(reader);
    const frames = readFrames(reader, pixel.frameCount);
    const pixelCount = pixel.frameCount * pixel.rows * pixel.columns;
    const isBinary = pixel.segmentationType === 'BINARY';
    // PS3.5 8.1.1: 1-bit pixels are packed 8 a byte with no padding between frames.
    const neededBytes = isBinary ? Math.ceil(pixelCount / 8) : pixelCount;
    const pixels = readPixels(
      dataSet,
      neededBytes,
      `${pixel.frameCount} frames of ${pixel.rows} × ${pixel.columns} pixels at ` +
        `${isBinary ? '1 bit' : '8 bits'} a pixel`,
    );
    return {
      rows: pixel.rows,
      columns: pixel.columns,
      segmentationType: pixel.segmentationType,
      maxFractionalValue: pixel.maxFractionalValue,
      segments,
      frames,
      pixels,
    };
  } catch (error) {
    if (error instanceof StructureRefusal) throw error;
    throw refusalOfParserError(error, 'an attribute');
  }
}
