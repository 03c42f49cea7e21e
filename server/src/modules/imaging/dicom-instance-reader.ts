/**
 * Reads one DICOM Part 10 file (PS3.10) with dicom-parser, in two steps that run inside the
 * reading worker (`dicom-read.worker.ts`, which bounds their time and memory):
 *
 * - `scanInstance`: the header as a DICOM JSON data set and what the file is: an image whose
 *   frames (one for classic images, many for Enhanced CT/MR) each carry their geometry and
 *   rescale, or another object (report, presentation state, localizer, colour capture…) with
 *   the reason it is not offered as a series;
 * - `decodeInstance`: the same, plus the pixels of every frame as int16 values with padding
 *   and rescale applied, decoded from whichever transfer syntax `pixel-data/` knows.
 *
 * Everything here is synchronous and throws an `InstanceRefusal` whose detail names the file
 * and what is wrong with it.
 */
import { inflateRawSync } from 'node:zlib';
import dicomParser, { type DataSet, type Element } from 'dicom-parser';
import dcmjs from 'dcmjs';
import type { DicomJsonDataset, DicomJsonElement, DicomJsonValue } from './dicom-json';
import { firstNumber, firstString, numberValues, sequenceItems, stringValues } from './dicom-json';
import type { RefusalPayload, RefusalReason } from './imaging-refusal';
import {
  decodeFrame,
  encapsulatedFrames,
  transferSyntaxes,
  withExtendedOffsetTableReadable,
  type FrameLayout,
  type TransferSyntax,
} from './pixel-data';

export interface InstanceReadLimits {
  /** Sequences nested deeper than this are refused. */
  maxSequenceDepth: number;
  /** Attributes in one file, nested ones included. */
  maxAttributes: number;
  /** Bytes of one file once a deflated data set is inflated. */
  maxInstanceBytes: number;
  /**
   * Bytes the decoded pixels of one file may take (frames × rows × columns × 2): checked from
   * the header before anything is decoded, so that no codestream can make a decoder allocate
   * for an image far larger than a CT or MR series needs.
   */
  maxDecodedBytes: number;
}

/** Rows and columns of an image at most: CT and MR matrices are 512–1024 (common practice). */
export const maxMatrix = 4096;

export class InstanceRefusal extends Error {
  constructor(readonly payload: RefusalPayload) {
    super(payload.detail);
  }
}

export const implicitVrLittleEndian = '1.2.840.10008.1.2';
export const explicitVrLittleEndianUid = '1.2.840.10008.1.2.1';
const stringVrs = new Set([
  'AE',
  'AS',
  'CS',
  'DA',
  'DS',
  'DT',
  'IS',
  'LO',
  'LT',
  'PN',
  'SH',
  'ST',
  'TM',
  'UC',
  'UI',
  'UR',
  'UT',
]);
/** Text VRs hold one value: a backslash in them is text. */
const singleValueVrs = new Set(['LT', 'ST', 'UT', 'UR']);
const binaryNumberSizes: Record<string, number> = {
  US: 2,
  SS: 2,
  UL: 4,
  SL: 4,
  FL: 4,
  FD: 8,
  AT: 4,
  SV: 8,
  UV: 8,
};
/** Larger binary values (icons, overlays, curves…) are left out of the header: none is kept. */
const maxInlineBinaryBytes = 4096;

function refuse(status: number, reason: RefusalReason, detail: string): never {
  throw new InstanceRefusal({ status, reason, detail });
}

/** A UID fit to quote in a message: digits and dots only, else a placeholder. */
function quotableUid(uid: string): string {
  return /^[0-9.]{1,64}$/.test(uid) ? uid : '(not a valid UID)';
}

/** dicom-parser throws strings, Errors and { exception, dataSet } objects. */
function parserMessage(error: unknown): string {
  const inner =
    typeof error === 'object' && error !== null && 'exception' in error
      ? (error as { exception: unknown }).exception
      : error;
  const text = inner instanceof Error ? inner.message : String(inner);
  return text
    .replace(/^dicomParser[.:][\w.]*:?\s*/, '')
    .replace(/[^\w .,:;()'-]/g, '')
    .slice(0, 160);
}

function isStackOverflow(error: unknown): boolean {
  const inner =
    typeof error === 'object' && error !== null && 'exception' in error
      ? (error as { exception: unknown }).exception
      : error;
  return inner instanceof RangeError && /call stack/i.test(inner.message);
}

function isOverread(message: string): boolean {
  return /past end|overread|overrun|greater than or equal to|eof/i.test(message);
}

function hex(tag: string): string {
  // dicom-parser's "x0010ea00" → "0010EA00"
  return tag.slice(1).toUpperCase();
}

function tagForMessage(tag: string): string {
  return `(${tag.slice(0, 4)},${tag.slice(4)})`;
}

function dictionaryVr(tag: string, isSigned: boolean): string {
  const entry = dcmjs.data.DicomMetaDictionary.dictionary[tagForMessage(tag)];
  if (!entry) return 'UN';
  if (entry.vr === 'xs') return isSigned ? 'SS' : 'US';
  if (entry.vr === 'ox') return 'OW';
  const first = entry.vr.split(' or ')[0];
  return /^[A-Z]{2}$/.test(first) ? first : 'UN';
}

interface ReadContext {
  byteArray: Uint8Array;
  label: string;
  limits: InstanceReadLimits;
  isUtf8: boolean;
  isSigned: boolean;
  isLittleEndian: boolean;
  attributeCount: number;
}

function decodeText(context: ReadContext, start: number, length: number): string {
  const bytes = context.byteArray.subarray(start, start + length);
  if (context.isUtf8) return new TextDecoder('utf-8').decode(bytes);
  let text = '';
  for (let index = 0; index < bytes.length; index++) text += String.fromCharCode(bytes[index]);
  return text;
}

function stringValue(vr: string, part: string): DicomJsonValue {
  const value = singleValueVrs.has(vr) ? part : part.trim();
  if (value === '') return null;
  switch (vr) {
    case 'DS':
      return /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/.test(value) ? Number(value) : null;
    case 'IS':
      return /^[+-]?\d+$/.test(value) ? Number(value) : null;
    case 'PN': {
      const [alphabetic, ideographic, phonetic] = value.split('=');
      const name: Record<string, string> = {};
      if (alphabetic) name.Alphabetic = alphabetic;
      if (ideographic) name.Ideographic = ideographic;
      if (phonetic) name.Phonetic = phonetic;
      return name;
    }
    default:
      return value;
  }
}

function readBinaryNumbers(
  context: ReadContext,
  vr: string,
  element: Element,
  size: number,
): DicomJsonValue[] {
  const view = new DataView(
    context.byteArray.buffer,
    context.byteArray.byteOffset + element.dataOffset,
    element.length,
  );
  const little = context.isLittleEndian;
  const values: DicomJsonValue[] = [];
  const count = Math.min(Math.floor(element.length / size), 1024);
  for (let index = 0; index < count; index++) {
    const at = index * size;
    switch (vr) {
      case 'US':
        values.push(view.getUint16(at, little));
        break;
      case 'SS':
        values.push(view.getInt16(at, little));
        break;
      case 'UL':
        values.push(view.getUint32(at, little));
        break;
      case 'SL':
        values.push(view.getInt32(at, little));
        break;
      case 'FL':
        values.push(view.getFloat32(at, little));
        break;
      case 'FD':
        values.push(view.getFloat64(at, little));
        break;
      case 'AT':
        values.push(
          view.getUint16(at, little).toString(16).padStart(4, '0').toUpperCase() +
            view
              .getUint16(at + 2, little)
              .toString(16)
              .padStart(4, '0')
              .toUpperCase(),
        );
        break;
      case 'SV':
        values.push(Number(view.getBigInt64(at, little)));
        break;
      default:
        values.push(Number(view.getBigUint64(at, little)));
    }
  }
  return values;
}

function convertElement(
  context: ReadContext,
  element: Element,
  tag: string,
  depth: number,
): DicomJsonElement | undefined {
  const vr = element.vr ?? (element.items ? 'SQ' : dictionaryVr(tag, context.isSigned));
  if (element.items) {
    if (depth >= context.limits.maxSequenceDepth) {
      refuse(
        400,
        'too-complex',
        `${context.label} nests sequences deeper than ${context.limits.maxSequenceDepth} levels ` +
          `(at ${tagForMessage(tag)}); an image header never needs that.`,
      );
    }
    return {
      vr: 'SQ',
      Value: element.items.map((item) =>
        item.dataSet ? convertDataSet(context, item.dataSet, depth + 1) : {},
      ),
    };
  }
  if (element.length === 0) return { vr };
  if (element.dataOffset + element.length > context.byteArray.length) {
    refuse(
      400,
      'truncated',
      `${context.label} is truncated: attribute ${tagForMessage(tag)} runs past the end of the file.`,
    );
  }
  if (stringVrs.has(vr)) {
    const raw = decodeText(context, element.dataOffset, element.length).replace(/[\0 ]+$/, '');
    const parts = singleValueVrs.has(vr) ? [raw] : raw.split('\\');
    const values = parts.map((part) => stringValue(vr, part));
    return values.every((value) => value === null) ? { vr } : { vr, Value: values };
  }
  const size = binaryNumberSizes[vr];
  if (size) return { vr, Value: readBinaryNumbers(context, vr, element, size) };
  if (element.length > maxInlineBinaryBytes) return undefined;
  const bytes = context.byteArray.subarray(element.dataOffset, element.dataOffset + element.length);
  return { vr, InlineBinary: Buffer.from(bytes).toString('base64') };
}

function convertDataSet(context: ReadContext, dataSet: DataSet, depth: number): DicomJsonDataset {
  const converted: DicomJsonDataset = {};
  for (const [parserTag, element] of Object.entries(dataSet.elements)) {
    const tag = hex(parserTag);
    // Items and delimiters (FFFE), the file meta (replaced later) and the pixels (read apart).
    if (tag.startsWith('FFFE') || tag.startsWith('0002') || tag === '7FE00010') continue;
    context.attributeCount += 1;
    if (context.attributeCount > context.limits.maxAttributes) {
      refuse(
        400,
        'too-complex',
        `${context.label} holds more than ${context.limits.maxAttributes} attributes; ` +
          'an image header never needs that many.',
      );
    }
    const result = convertElement(context, element, tag, depth);
    if (result) converted[tag] = result;
  }
  return converted;
}

function checkPreamble(bytes: Uint8Array, label: string): void {
  const marker = [0x44, 0x49, 0x43, 0x4d]; // "DICM"
  if (bytes.length < 132 || marker.some((byte, index) => bytes[128 + index] !== byte)) {
    refuse(
      415,
      'not-dicom',
      `${label} is not a DICOM file: it lacks the "DICM" marker after the 128-byte preamble ` +
        '(DICOM PS3.10 7.1).',
    );
  }
}

/**
 * Encapsulated syntaxes (Explicit VR Little Endian around compressed pixels) whose header is
 * read but whose pixels Emberline does not decode: lossy 8-bit and video codings no CT or MR
 * volume for a board should come in (names from DICOM PS3.6 Table A-1, from memory).
 */
const undecodedSyntaxNames: Record<string, string> = {
  '1.2.840.10008.1.2.4.50': 'JPEG Baseline (Process 1)',
  '1.2.840.10008.1.2.4.51': 'JPEG Extended (Process 2 & 4)',
  '1.2.840.10008.1.2.4.100': 'MPEG2 Main Profile',
  '1.2.840.10008.1.2.4.102': 'MPEG-4 AVC/H.264',
  '1.2.840.10008.1.2.4.201': 'High-Throughput JPEG 2000 Lossless Only',
  '1.2.840.10008.1.2.4.202': 'High-Throughput JPEG 2000 with RPCL Options Lossless Only',
  '1.2.840.10008.1.2.4.203': 'High-Throughput JPEG 2000',
};

/** The syntax a file is read in, decodable (`pixel-data/`) or known but not decoded. */
function syntaxOf(uid: string): TransferSyntax & { isDecodable: boolean } {
  const known = transferSyntaxes.get(uid);
  if (known) return { ...known, isDecodable: true };
  return {
    uid,
    name: undecodedSyntaxNames[uid] ?? uid,
    kind: 'encapsulated',
    byteOrder: 'little',
    isDeflated: false,
    loss: 'lossy',
    lossyMethod: null,
    isDecodable: false,
  };
}

/** The Transfer Syntax UID of the file meta, read before the data set. */
function transferSyntaxOf(bytes: Uint8Array, label: string): string {
  let meta: DataSet;
  try {
    meta = dicomParser.readPart10Header(bytes);
  } catch (error) {
    // Reading the meta reads the first attribute after it too, sequences and all.
    if (isStackOverflow(error)) {
      refuse(400, 'too-complex', `${label} nests its attributes too deeply to be read.`);
    }
    const message = parserMessage(error);
    if (isOverread(message)) {
      refuse(400, 'truncated', `${label} is truncated: it ends inside an attribute.`);
    }
    refuse(400, 'malformed', `${label}: its file meta information cannot be read (${message}).`);
  }
  const uid = meta.string('x00020010')?.replace(/\0/g, '').trim();
  if (!uid) {
    refuse(400, 'malformed', `${label} has no Transfer Syntax UID (0002,0010) in its file meta.`);
  }
  if (!transferSyntaxes.has(uid) && !undecodedSyntaxNames[uid]) {
    // Without knowing the encoding, not even the header can be read safely.
    refuse(
      415,
      'transfer-syntax',
      `${label} uses the transfer syntax ${quotableUid(uid)}, which Emberline does not read. ` +
        `It reads ${[...transferSyntaxes.values()].map((syntax) => syntax.name).join(', ')}.`,
    );
  }
  return uid;
}

/** dicom-parser's hook for Deflated Explicit VR Little Endian: raw deflate, bounded in size. */
function boundedInflater(label: string, maxBytes: number) {
  return (byteArray: Uint8Array, position: number): Uint8Array => {
    let inflated: Buffer;
    try {
      inflated = inflateRawSync(byteArray.subarray(position), {
        maxOutputLength: Math.max(1, maxBytes - position),
      });
    } catch (error) {
      const code = (error as { code?: unknown }).code;
      if (code === 'ERR_BUFFER_TOO_LARGE' || error instanceof RangeError) {
        refuse(
          413,
          'too-large',
          `${label} inflates to more than ${(maxBytes / 1_048_576).toFixed(1)} MB, the most one ` +
            'DICOM file may hold.',
        );
      }
      refuse(400, 'malformed', `${label}: its deflated data set cannot be inflated.`);
    }
    const whole = new Uint8Array(position + inflated.length);
    whole.set(byteArray.subarray(0, position), 0);
    whole.set(inflated, position);
    return whole;
  };
}

function parse(bytes: Uint8Array, label: string, maxInstanceBytes: number): DataSet {
  let dataSet: DataSet;
  try {
    dataSet = dicomParser.parseDicom(bytes, {
      inflater: boundedInflater(label, maxInstanceBytes),
    } as Parameters<typeof dicomParser.parseDicom>[1]);
  } catch (error) {
    if (error instanceof InstanceRefusal) throw error;
    if (
      typeof error === 'object' &&
      error !== null &&
      'exception' in error &&
      error.exception instanceof InstanceRefusal
    ) {
      throw error.exception;
    }
    if (isStackOverflow(error)) {
      refuse(400, 'too-complex', `${label} nests its attributes too deeply to be read.`);
    }
    const message = parserMessage(error);
    if (isOverread(message)) {
      refuse(400, 'truncated', `${label} is truncated: it ends inside an attribute.`);
    }
    refuse(400, 'malformed', `${label} is not a readable DICOM data set (${message}).`);
  }
  if (dataSet.warnings.some((warning) => /eof/i.test(warning))) {
    refuse(
      400,
      'truncated',
      `${label} is truncated: it ends inside a sequence of undefined length.`,
    );
  }
  return dataSet;
}

/** How the stored pixel values of a file are laid out (DICOM PS3.3 C.7.6.3). */
export interface PixelLayout {
  rows: number;
  columns: number;
  bitsAllocated: 8 | 16;
  bitsStored: number;
  isSigned: boolean;
  frameCount: number;
}

/** One frame of an image file: where it lies and how its stored values become CT/MR values. */
export interface FrameDescriptor {
  imagePositionPatient: number[];
  imageOrientationPatient: number[];
  pixelSpacing: number[];
  sliceThicknessMm: number | null;
  rescale: { slope: number; intercept: number };
}

/** A file that holds a greyscale CT or MR image (single-frame, or Enhanced multi-frame). */
export interface ScannedImage {
  kind: 'image';
  label: string;
  /** Every attribute but Pixel Data and the file meta, as read: not yet de-identified. */
  header: DicomJsonDataset;
  transferSyntaxUid: string;
  layout: PixelLayout;
  frames: FrameDescriptor[];
  /** Enhanced CT/MR Image Storage (frames from the functional groups). */
  isEnhanced: boolean;
  /** Bytes of Pixel Data as stored in the file (compressed or not). */
  pixelDataBytes: number;
}

/** A file that is DICOM but not offered as an image series, and why. */
export interface ScannedOther {
  kind: 'other';
  label: string;
  /** What the object is, for the listing: "Dose report", "Localizer", "Colour image"… */
  what: string;
  /** A few attributes that sort it into its series: never shown beyond the listing. */
  header: DicomJsonDataset;
  /** Why it is not offered: the refusal an upload holding nothing else would answer. */
  refusal: RefusalPayload;
  /** True for an image that could be a series but is not usable (not a report or a scout). */
  isUnusableImage: boolean;
}

export type ScannedInstance = ScannedImage | ScannedOther;

/** The decoded frames of an image file, in frame order. */
export interface DecodedInstance {
  label: string;
  /** Rows × columns values a frame, row by row, after padding and rescale. */
  frames: Int16Array<ArrayBuffer>[];
  valueRange: { min: number; max: number };
  /** What the codestreams say of loss: true if any frame is lossy, false if all say lossless. */
  isLossyByCodestream: boolean | null;
}

const sopClasses = {
  ctImage: '1.2.840.10008.5.1.4.1.1.2',
  enhancedCtImage: '1.2.840.10008.5.1.4.1.1.2.1',
  legacyEnhancedCtImage: '1.2.840.10008.5.1.4.1.1.2.2',
  mrImage: '1.2.840.10008.5.1.4.1.1.4',
  enhancedMrImage: '1.2.840.10008.5.1.4.1.1.4.1',
  legacyEnhancedMrImage: '1.2.840.10008.5.1.4.1.1.4.4',
};
const imageSopClasses = new Set(Object.values(sopClasses));
const enhancedSopClasses = new Set([
  sopClasses.enhancedCtImage,
  sopClasses.legacyEnhancedCtImage,
  sopClasses.enhancedMrImage,
  sopClasses.legacyEnhancedMrImage,
]);

/**
 * What a non-image object is, by its SOP Class UID (DICOM PS3.4 Annex B, from memory): the
 * structured reports (dose reports among them), presentation states, key object selections and
 * encapsulated documents an archive sends along with a study.
 */
function nonImageKind(sopClassUid: string, modality: string | undefined): string | null {
  if (sopClassUid === '1.2.840.10008.5.1.4.1.1.88.67') return 'Dose report';
  if (sopClassUid === '1.2.840.10008.5.1.4.1.1.88.59') return 'Key object selection';
  if (sopClassUid.startsWith('1.2.840.10008.5.1.4.1.1.88.')) return 'Structured report';
  if (sopClassUid.startsWith('1.2.840.10008.5.1.4.1.1.11.')) return 'Presentation state';
  if (sopClassUid.startsWith('1.2.840.10008.5.1.4.1.1.104.')) return 'Encapsulated document';
  if (sopClassUid === '1.2.840.10008.5.1.4.1.1.66.4') return 'Segmentation';
  if (sopClassUid.startsWith('1.2.840.10008.5.1.4.1.1.481.')) return 'Radiotherapy object';
  if (modality === 'SR') return 'Structured report';
  if (modality === 'PR') return 'Presentation state';
  if (modality === 'KO') return 'Key object selection';
  return null;
}

function positiveInteger(header: DicomJsonDataset, tag: string, name: string, label: string) {
  const value = firstNumber(header, tag);
  if (value === undefined || !Number.isInteger(value) || value < 1) {
    refuse(
      400,
      'malformed',
      `${label} lacks a valid ${name} ${tagForMessage(tag)}: a positive integer is required.`,
    );
  }
  return value;
}

function pixelLayout(header: DicomJsonDataset, label: string, isEnhanced: boolean): PixelLayout {
  const rows = positiveInteger(header, '00280010', 'Rows', label);
  const columns = positiveInteger(header, '00280011', 'Columns', label);
  const samples = firstNumber(header, '00280002') ?? 1;
  const photometric = firstString(header, '00280004') ?? 'MONOCHROME2';
  if (samples !== 1 || !['MONOCHROME1', 'MONOCHROME2'].includes(photometric)) {
    refuse(
      415,
      'pixel-format',
      `${label} is a colour image (Samples per Pixel ${samples}, Photometric Interpretation ` +
        `${photometric.replace(/[^A-Z0-9_ ]/g, '')}); Emberline reads greyscale CT and MR only.`,
    );
  }
  const frameCount = firstNumber(header, '00280008') ?? 1;
  if (!Number.isInteger(frameCount) || frameCount < 1) {
    refuse(400, 'malformed', `${label}: Number of Frames (0028,0008) is not a positive integer.`);
  }
  if (frameCount !== 1 && !isEnhanced) {
    refuse(
      415,
      'multi-frame',
      `${label} holds ${frameCount} frames but is not an Enhanced CT or MR image; Emberline ` +
        'reads single-frame CT and MR images and Enhanced CT and MR Image Storage.',
    );
  }
  const bitsAllocated = positiveInteger(header, '00280100', 'Bits Allocated', label);
  const bitsStored = firstNumber(header, '00280101') ?? bitsAllocated;
  const highBit = firstNumber(header, '00280102') ?? bitsStored - 1;
  const representation = firstNumber(header, '00280103') ?? 0;
  if (
    (bitsAllocated !== 8 && bitsAllocated !== 16) ||
    !Number.isInteger(bitsStored) ||
    bitsStored < 1 ||
    bitsStored > bitsAllocated ||
    highBit !== bitsStored - 1 ||
    ![0, 1].includes(representation)
  ) {
    refuse(
      415,
      'pixel-format',
      `${label} stores pixels as Bits Allocated ${bitsAllocated}, Bits Stored ${bitsStored}, ` +
        `High Bit ${highBit}, Pixel Representation ${representation}; Emberline reads 8 or 16 ` +
        'bits allocated with the high bit at Bits Stored − 1.',
    );
  }
  return {
    rows,
    columns,
    bitsAllocated,
    bitsStored,
    isSigned: representation === 1,
    frameCount,
  };
}

function checkedRescale(slope: number, intercept: number, label: string) {
  if (!(slope > 0) || !Number.isFinite(slope) || !Number.isFinite(intercept)) {
    refuse(
      400,
      'malformed',
      `${label}: Rescale Slope (0028,1053) must be a positive number and Rescale Intercept ` +
        '(0028,1052) a number.',
    );
  }
  return { slope, intercept };
}

/** A classic image: one frame, its geometry in the top-level attributes (PS3.3 C.7.6.2). */
function classicFrame(header: DicomJsonDataset, label: string): FrameDescriptor {
  return {
    imagePositionPatient: numberValues(header, '00200032'),
    imageOrientationPatient: numberValues(header, '00200037'),
    pixelSpacing: numberValues(header, '00280030'),
    sliceThicknessMm: positiveOrNull(firstNumber(header, '00180050')),
    rescale: checkedRescale(
      firstNumber(header, '00281053') ?? 1,
      firstNumber(header, '00281052') ?? 0,
      label,
    ),
  };
}

function positiveOrNull(value: number | undefined): number | null {
  return value !== undefined && Number.isFinite(value) && value > 0 ? value : null;
}

const functionalGroupTags = {
  shared: '52009229',
  perFrame: '52009230',
  planePosition: '00209113',
  planeOrientation: '00209116',
  pixelMeasures: '00289110',
  pixelValueTransformation: '00289145',
};

/**
 * The first item of a functional group macro's sequence for one frame: the Per-frame
 * Functional Groups item wins over the Shared one (DICOM PS3.3 C.7.6.16).
 */
function groupItem(
  perFrame: DicomJsonDataset | undefined,
  shared: DicomJsonDataset | undefined,
  sequenceTag: string,
): DicomJsonDataset | undefined {
  const own = perFrame ? sequenceItems(perFrame[sequenceTag])[0] : undefined;
  return own ?? (shared ? sequenceItems(shared[sequenceTag])[0] : undefined);
}

/**
 * The frames of an Enhanced CT/MR image from its functional groups (DICOM PS3.3 C.7.6.16 and
 * C.7.6.16.2: Plane Position (Patient), Plane Orientation (Patient), Pixel Measures and Pixel
 * Value Transformation). MR usually has no Pixel Value Transformation: identity then.
 */
function enhancedFrames(
  header: DicomJsonDataset,
  layout: PixelLayout,
  label: string,
): FrameDescriptor[] {
  const shared = sequenceItems(header[functionalGroupTags.shared])[0];
  const perFrame = sequenceItems(header[functionalGroupTags.perFrame]);
  if (perFrame.length !== layout.frameCount) {
    refuse(
      400,
      'malformed',
      `${label} declares ${layout.frameCount} frames but its Per-frame Functional Groups ` +
        `Sequence (5200,9230) holds ${perFrame.length} items; each frame needs one.`,
    );
  }
  return perFrame.map((item, index) => {
    const position = groupItem(item, shared, functionalGroupTags.planePosition);
    const orientation = groupItem(item, shared, functionalGroupTags.planeOrientation);
    const measures = groupItem(item, shared, functionalGroupTags.pixelMeasures);
    const transformation = groupItem(item, shared, functionalGroupTags.pixelValueTransformation);
    if (!position || !orientation || !measures) {
      const missing = [
        !position && 'Plane Position (Patient)',
        !orientation && 'Plane Orientation (Patient)',
        !measures && 'Pixel Measures',
      ].filter(Boolean);
      refuse(
        400,
        'malformed',
        `${label}: frame ${index + 1} lacks the ${missing.join(', ')} functional group; its ` +
          'place in the patient cannot be known.',
      );
    }
    return {
      imagePositionPatient: numberValues(position, '00200032'),
      imageOrientationPatient: numberValues(orientation, '00200037'),
      pixelSpacing: numberValues(measures, '00280030'),
      sliceThicknessMm: positiveOrNull(firstNumber(measures, '00180050')),
      rescale: checkedRescale(
        (transformation && firstNumber(transformation, '00281053')) ?? 1,
        (transformation && firstNumber(transformation, '00281052')) ?? 0,
        `${label} (frame ${index + 1})`,
      ),
    };
  });
}

function otherObject(
  label: string,
  header: DicomJsonDataset,
  what: string,
  refusal: RefusalPayload,
  isUnusableImage: boolean,
): ScannedOther {
  // Only what sorts the object into its series goes along.
  const kept: DicomJsonDataset = {};
  for (const tag of ['00080016', '00080060', '0020000E', '00200011', '0008103E', '00080008']) {
    if (header[tag]) kept[tag] = header[tag];
  }
  return { kind: 'other', label, what, header: kept, refusal, isUnusableImage };
}

interface ParsedFile {
  dataSet: DataSet;
  header: DicomJsonDataset;
  syntax: TransferSyntax & { isDecodable: boolean };
}

function parseFile(bytes: Uint8Array, label: string, limits: InstanceReadLimits): ParsedFile {
  checkPreamble(bytes, label);
  const syntax = syntaxOf(transferSyntaxOf(bytes, label));
  // dicom-parser does not know the VR OV of an Extended Offset Table: read it as OB.
  const dataSet = parse(withExtendedOffsetTableReadable(bytes), label, limits.maxInstanceBytes);
  const characterSet = dataSet.string('x00080005') ?? '';
  const context: ReadContext = {
    byteArray: dataSet.byteArray,
    label,
    limits,
    isUtf8: /ISO_IR 192/.test(characterSet),
    isSigned: dataSet.uint16('x00280103') === 1,
    isLittleEndian: syntax.byteOrder === 'little',
    attributeCount: 0,
  };
  let header: DicomJsonDataset;
  try {
    header = convertDataSet(context, dataSet, 0);
  } catch (error) {
    if (error instanceof InstanceRefusal) throw error;
    if (isStackOverflow(error)) {
      refuse(400, 'too-complex', `${label} nests its attributes too deeply to be read.`);
    }
    refuse(400, 'malformed', `${label}: an attribute cannot be read (${parserMessage(error)}).`);
  }
  return { dataSet, header, syntax };
}

/** Refuses (413) an image whose decoded pixels would exceed the bounds, before any decoding. */
function checkDecodedSize(layout: PixelLayout, label: string, maxDecodedBytes: number): void {
  if (layout.rows > maxMatrix || layout.columns > maxMatrix) {
    refuse(
      413,
      'too-large',
      `${label} is ${layout.columns} × ${layout.rows} pixels; Emberline reads images of at most ` +
        `${maxMatrix} × ${maxMatrix}.`,
    );
  }
  const bytes = layout.rows * layout.columns * 2 * layout.frameCount;
  if (bytes > maxDecodedBytes) {
    refuse(
      413,
      'too-large',
      `${label} decodes to ${(bytes / 1_048_576).toFixed(0)} MB of pixels (${layout.frameCount} ` +
        `frames); one file may decode to at most ${(maxDecodedBytes / 1_048_576).toFixed(0)} MB.`,
    );
  }
}

/** Classifies a parsed file: a usable image with its frames, or another object and why. */
function classify(parsed: ParsedFile, label: string, limits: InstanceReadLimits): ScannedInstance {
  const { dataSet, header, syntax } = parsed;
  const sopClassUid = firstString(header, '00080016') ?? '';
  const modality = firstString(header, '00080060');
  const nonImage = nonImageKind(sopClassUid, modality);
  const pixelElement = dataSet.elements.x7fe00010;
  if (!pixelElement && imageSopClasses.has(sopClassUid)) {
    // A CT or MR image without its pixels is a damaged file, not another kind of object.
    refuse(400, 'malformed', `${label} has no Pixel Data (7FE0,0010); the file may be cut short.`);
  }
  if (nonImage || !pixelElement) {
    const what = nonImage ?? 'Object without pixels';
    return otherObject(
      label,
      header,
      what,
      {
        status: 415,
        reason: 'modality',
        detail: `${label} is a ${what.toLowerCase()}, not an image; Emberline keeps CT and MR image series only.`,
      },
      false,
    );
  }
  const imageType = stringValues(header, '00080008').map((value) => value.toUpperCase());
  if (imageType.includes('LOCALIZER')) {
    return otherObject(
      label,
      header,
      'Localizer',
      {
        status: 415,
        reason: 'modality',
        detail: `${label} is a localizer (scout) image, a planning view rather than a volume.`,
      },
      false,
    );
  }
  const unusable = (what: string, refusal: RefusalPayload) =>
    otherObject(label, header, what, refusal, true);
  if (modality !== 'CT' && modality !== 'MR') {
    return unusable(`${quotableCode(modality)} image`, {
      status: 415,
      reason: 'modality',
      detail: `${label} is of modality ${quotableCode(modality)}; Emberline takes CT and MR series only.`,
    });
  }
  if (!syntax.isDecodable) {
    return unusable('Image in an unread compression', {
      status: 415,
      reason: 'transfer-syntax',
      detail:
        `${label} is compressed as ${syntax.name}, which Emberline does not decode. ` +
        `It decodes ${[...transferSyntaxes.values()].map((entry) => entry.name).join(', ')}.`,
    });
  }
  const isEnhanced = enhancedSopClasses.has(sopClassUid);
  try {
    const layout = pixelLayout(header, label, isEnhanced);
    checkDecodedSize(layout, label, limits.maxDecodedBytes);
    const frames = isEnhanced
      ? enhancedFrames(header, layout, label)
      : [classicFrame(header, label)];
    if (firstString(header, '00280301') === 'YES') {
      return unusable('Image with burned-in annotation', {
        status: 415,
        reason: 'burned-in-annotation',
        detail:
          `${label} declares Burned In Annotation (0028,0301) YES: its pixels may show ` +
          'identifying text, which de-identification of the header does not remove. Export ' +
          'the series without annotations.',
      });
    }
    return {
      kind: 'image',
      label,
      header,
      transferSyntaxUid: syntax.uid,
      layout,
      frames,
      isEnhanced,
      pixelDataBytes: pixelElement.encapsulatedPixelData
        ? (pixelElement.fragments ?? []).reduce((sum, fragment) => sum + fragment.length, 0)
        : Math.max(0, pixelElement.length),
    };
  } catch (error) {
    // A colour or oddly stored image is listed as not usable; a broken header refuses.
    if (error instanceof InstanceRefusal && error.payload.status === 415) {
      const what =
        error.payload.reason === 'multi-frame' ? 'Multi-frame image' : 'Image in another format';
      return unusable(what, error.payload);
    }
    throw error;
  }
}

function quotableCode(value: string | undefined): string {
  return (value ?? '').replace(/[^A-Z0-9 _]/gi, '').slice(0, 16) || '(none)';
}

/** Reads a file's header and sorts it: an image with its frames, or another object. */
export function scanInstance(
  bytes: Uint8Array,
  label: string,
  limits: InstanceReadLimits,
): ScannedInstance {
  return classify(parseFile(bytes, label, limits), label, limits);
}

/** Stored values of every frame of a native (uncompressed) Pixel Data element. */
function nativeFrames(
  dataSet: DataSet,
  element: Element,
  layout: PixelLayout,
  syntax: TransferSyntax,
  label: string,
): (Uint8Array | Uint16Array)[] {
  if (element.encapsulatedPixelData) {
    refuse(400, 'malformed', `${label} holds encapsulated Pixel Data in an uncompressed syntax.`);
  }
  const count = layout.rows * layout.columns;
  const bytesPerValue = layout.bitsAllocated / 8;
  const frameBytes = count * bytesPerValue;
  const needed = frameBytes * layout.frameCount;
  const available = Math.min(element.length, dataSet.byteArray.length - element.dataOffset);
  if (available < needed) {
    refuse(
      400,
      'truncated',
      `${label} is truncated: its Pixel Data holds ${Math.max(available, 0)} bytes, where ` +
        `${layout.frameCount > 1 ? `${layout.frameCount} frames × ` : ''}${layout.rows} rows × ` +
        `${layout.columns} columns × ${bytesPerValue} bytes need ${needed}.`,
    );
  }
  const frames: (Uint8Array | Uint16Array)[] = [];
  for (let frame = 0; frame < layout.frameCount; frame++) {
    const offset = dataSet.byteArray.byteOffset + element.dataOffset + frame * frameBytes;
    if (bytesPerValue === 1) {
      frames.push(new Uint8Array(dataSet.byteArray.buffer, offset, frameBytes));
      continue;
    }
    const view = new DataView(dataSet.byteArray.buffer, offset, frameBytes);
    const values = new Uint16Array(count);
    const little = syntax.byteOrder === 'little';
    for (let index = 0; index < count; index++) values[index] = view.getUint16(index * 2, little);
    frames.push(values);
  }
  return frames;
}

/**
 * Pixel Padding Value (0028,0120), with Pixel Padding Range Limit (0028,0121) when present:
 * the stored values that mark pixels outside the scanned field (DICOM PS3.3 C.7.5.1.1.2).
 */
function paddingRange(header: DicomJsonDataset): { low: number; high: number } | null {
  const value = firstNumber(header, '00280120');
  if (value === undefined || !Number.isFinite(value)) return null;
  const limit = firstNumber(header, '00280121');
  const other = limit !== undefined && Number.isFinite(limit) ? limit : value;
  return { low: Math.min(value, other), high: Math.max(value, other) };
}

/**
 * What padded pixels become: air (−1024 HU) in CT, 0 in MR. The padding marks pixels outside
 * the scanned field; stored as they are, they would reach values far below air (often −2000
 * or −3024 HU after rescale) and stretch the value range and the default window.
 */
function paddingFill(modality: string | undefined): number {
  return modality === 'CT' ? -1024 : 0;
}

/** Reads a file and decodes every frame: padding and rescale applied, checked to fit int16. */
export function decodeInstance(
  bytes: Uint8Array,
  label: string,
  limits: InstanceReadLimits,
  onFrame?: (done: number, total: number) => void,
): { scanned: ScannedImage; decoded: DecodedInstance } {
  const parsed = parseFile(bytes, label, limits);
  const scanned = classify(parsed, label, limits);
  if (scanned.kind !== 'image') throw new InstanceRefusal(scanned.refusal);
  const { layout } = scanned;
  const { dataSet, syntax } = parsed;
  const element = dataSet.elements.x7fe00010;
  const frameLayout: FrameLayout = {
    rows: layout.rows,
    columns: layout.columns,
    bitsAllocated: layout.bitsAllocated,
    bitsStored: layout.bitsStored,
    isSigned: layout.isSigned,
    label,
  };
  const compressed =
    syntax.kind === 'encapsulated'
      ? encapsulatedFrames(dataSet, element, layout.frameCount, label)
      : null;
  const native = compressed ? null : nativeFrames(dataSet, element, layout, syntax, label);
  const mask = 2 ** layout.bitsStored - 1;
  const signBit = 2 ** (layout.bitsStored - 1);
  const padding = paddingRange(scanned.header);
  const fill = paddingFill(firstString(scanned.header, '00080060'));
  const count = layout.rows * layout.columns;
  const frames: Int16Array<ArrayBuffer>[] = [];
  let min = Infinity;
  let max = -Infinity;
  let lossyFrames = 0;
  let losslessFrames = 0;
  for (let frame = 0; frame < layout.frameCount; frame++) {
    let values: Uint8Array | Uint16Array | Int16Array;
    if (compressed) {
      const result = decodeFrame(syntax, compressed[frame], frameLayout);
      values = result.values;
      if (result.isLossy === true) lossyFrames += 1;
      if (result.isLossy === false) losslessFrames += 1;
    } else {
      values = (native as (Uint8Array | Uint16Array)[])[frame];
    }
    if (values.length < count) {
      refuse(
        400,
        'malformed',
        `${label}: frame ${frame + 1} decodes to ${values.length} pixels, where ` +
          `${layout.rows} rows × ${layout.columns} columns need ${count}.`,
      );
    }
    const { slope, intercept } = scanned.frames[frame].rescale;
    const pixels = new Int16Array(count);
    for (let index = 0; index < count; index++) {
      let stored = values[index] & 0xffff & mask;
      if (layout.isSigned && stored >= signBit) stored -= 2 * signBit;
      let value: number;
      if (padding && stored >= padding.low && stored <= padding.high) {
        value = fill;
      } else {
        value = Math.round(stored * slope + intercept);
        if (value < -32768 || value > 32767) {
          refuse(
            400,
            'value-range',
            `${label}: after Rescale Slope and Intercept a pixel reaches ${value}, outside ` +
              '−32768…32767, the range Emberline stores.',
          );
        }
      }
      pixels[index] = value;
      if (value < min) min = value;
      if (value > max) max = value;
    }
    frames.push(pixels);
    onFrame?.(frame + 1, layout.frameCount);
  }
  const isLossyByCodestream =
    lossyFrames > 0 ? true : losslessFrames === layout.frameCount ? false : null;
  return { scanned, decoded: { label, frames, valueRange: { min, max }, isLossyByCodestream } };
}
