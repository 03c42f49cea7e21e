/**
 * Reads one DICOM Part 10 file (PS3.10) with dicom-parser: its header as a DICOM JSON data
 * set and its pixels as int16 values with the rescale applied. Runs inside the reading worker
 * (`dicom-read.worker.ts`), which bounds its time and memory; everything here is synchronous
 * and throws an `InstanceRefusal` whose detail names the file and what is wrong with it.
 */
import dicomParser, { type DataSet, type Element } from 'dicom-parser';
import dcmjs from 'dcmjs';
import type { DicomJsonDataset, DicomJsonElement, DicomJsonValue } from './dicom-json';
import { firstNumber, firstString } from './dicom-json';
import type { RefusalPayload, RefusalReason } from './imaging-refusal';

export interface InstanceReadLimits {
  /** Sequences nested deeper than this are refused. */
  maxSequenceDepth: number;
  /** Attributes in one file, nested ones included. */
  maxAttributes: number;
}

export interface ParsedInstance {
  /** "File 3" or "Zip entry 5": how messages name the file (never by its name). */
  label: string;
  /** Every attribute but Pixel Data and the file meta, as read: not yet de-identified. */
  header: DicomJsonDataset;
  /** Rows × columns values, row by row, after Rescale Slope and Intercept. */
  pixels: Int16Array<ArrayBuffer>;
  rescale: { slope: number; intercept: number };
  valueRange: { min: number; max: number };
}

export class InstanceRefusal extends Error {
  constructor(readonly payload: RefusalPayload) {
    super(payload.detail);
  }
}

export const implicitVrLittleEndian = '1.2.840.10008.1.2';
export const explicitVrLittleEndianUid = '1.2.840.10008.1.2.1';
const acceptedTransferSyntaxes = new Set([implicitVrLittleEndian, explicitVrLittleEndianUid]);

/** Names of transfer syntaxes (PS3.6 Table A-1) a refusal may mention; from memory. */
const transferSyntaxNames: Record<string, string> = {
  '1.2.840.10008.1.2.1.99': 'Deflated Explicit VR Little Endian',
  '1.2.840.10008.1.2.2': 'Explicit VR Big Endian',
  '1.2.840.10008.1.2.4.50': 'JPEG Baseline',
  '1.2.840.10008.1.2.4.51': 'JPEG Extended',
  '1.2.840.10008.1.2.4.57': 'JPEG Lossless',
  '1.2.840.10008.1.2.4.70': 'JPEG Lossless, first-order prediction',
  '1.2.840.10008.1.2.4.80': 'JPEG-LS Lossless',
  '1.2.840.10008.1.2.4.81': 'JPEG-LS Near-Lossless',
  '1.2.840.10008.1.2.4.90': 'JPEG 2000 Lossless Only',
  '1.2.840.10008.1.2.4.91': 'JPEG 2000',
  '1.2.840.10008.1.2.5': 'RLE Lossless',
};

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
  const values: DicomJsonValue[] = [];
  const count = Math.min(Math.floor(element.length / size), 1024);
  for (let index = 0; index < count; index++) {
    const at = index * size;
    switch (vr) {
      case 'US':
        values.push(view.getUint16(at, true));
        break;
      case 'SS':
        values.push(view.getInt16(at, true));
        break;
      case 'UL':
        values.push(view.getUint32(at, true));
        break;
      case 'SL':
        values.push(view.getInt32(at, true));
        break;
      case 'FL':
        values.push(view.getFloat32(at, true));
        break;
      case 'FD':
        values.push(view.getFloat64(at, true));
        break;
      case 'AT':
        values.push(
          view.getUint16(at, true).toString(16).padStart(4, '0').toUpperCase() +
            view
              .getUint16(at + 2, true)
              .toString(16)
              .padStart(4, '0')
              .toUpperCase(),
        );
        break;
      case 'SV':
        values.push(Number(view.getBigInt64(at, true)));
        break;
      default:
        values.push(Number(view.getBigUint64(at, true)));
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

function checkTransferSyntax(bytes: Uint8Array, label: string): void {
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
  if (!acceptedTransferSyntaxes.has(uid)) {
    const name = transferSyntaxNames[uid];
    refuse(
      415,
      'transfer-syntax',
      `${label} uses the transfer syntax ${quotableUid(uid)}${name ? ` (${name})` : ''}, which ` +
        `Emberline does not decode; export the series uncompressed, as Implicit VR Little Endian ` +
        `(${implicitVrLittleEndian}) or Explicit VR Little Endian (${explicitVrLittleEndianUid}).`,
    );
  }
}

function parse(bytes: Uint8Array, label: string): DataSet {
  let dataSet: DataSet;
  try {
    dataSet = dicomParser.parseDicom(bytes);
  } catch (error) {
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

interface PixelLayout {
  rows: number;
  columns: number;
  bitsAllocated: number;
  bitsStored: number;
  isSigned: boolean;
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

function pixelLayout(header: DicomJsonDataset, label: string): PixelLayout {
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
  const frames = firstNumber(header, '00280008') ?? 1;
  if (frames !== 1) {
    refuse(
      415,
      'multi-frame',
      `${label} holds ${Number.isFinite(frames) ? frames : 'an unreadable number of'} frames; ` +
        'Emberline reads single-frame images, one slice a file (export as "classic" images).',
    );
  }
  const bitsAllocated = positiveInteger(header, '00280100', 'Bits Allocated', label);
  const bitsStored = firstNumber(header, '00280101') ?? bitsAllocated;
  const highBit = firstNumber(header, '00280102') ?? bitsStored - 1;
  const representation = firstNumber(header, '00280103') ?? 0;
  if (
    ![8, 16].includes(bitsAllocated) ||
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
  return { rows, columns, bitsAllocated, bitsStored, isSigned: representation === 1 };
}

function rescaleOf(header: DicomJsonDataset, label: string) {
  const slope = firstNumber(header, '00281053') ?? 1;
  const intercept = firstNumber(header, '00281052') ?? 0;
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

function readPixels(
  dataSet: DataSet,
  header: DicomJsonDataset,
  label: string,
): Pick<ParsedInstance, 'pixels' | 'rescale' | 'valueRange'> {
  const layout = pixelLayout(header, label);
  const rescale = rescaleOf(header, label);
  const element = dataSet.elements.x7fe00010;
  if (!element) refuse(400, 'malformed', `${label} has no Pixel Data (7FE0,0010).`);
  if (element.encapsulatedPixelData) {
    refuse(400, 'malformed', `${label} holds encapsulated Pixel Data in an uncompressed syntax.`);
  }
  const count = layout.rows * layout.columns;
  const bytesPerValue = layout.bitsAllocated / 8;
  const needed = count * bytesPerValue;
  const available = Math.min(element.length, dataSet.byteArray.length - element.dataOffset);
  if (available < needed) {
    refuse(
      400,
      'truncated',
      `${label} is truncated: its Pixel Data holds ${Math.max(available, 0)} bytes, where ` +
        `${layout.rows} rows × ${layout.columns} columns × ${bytesPerValue} bytes need ${needed}.`,
    );
  }
  const view = new DataView(
    dataSet.byteArray.buffer,
    dataSet.byteArray.byteOffset + element.dataOffset,
    needed,
  );
  const mask = 2 ** layout.bitsStored - 1;
  const signBit = 2 ** (layout.bitsStored - 1);
  const pixels = new Int16Array(count);
  let min = Infinity;
  let max = -Infinity;
  for (let index = 0; index < count; index++) {
    const raw = bytesPerValue === 2 ? view.getUint16(index * 2, true) : view.getUint8(index) & 0xff;
    let stored = raw & mask;
    if (layout.isSigned && stored >= signBit) stored -= 2 * signBit;
    const value = Math.round(stored * rescale.slope + rescale.intercept);
    if (value < -32768 || value > 32767) {
      refuse(
        400,
        'value-range',
        `${label}: after Rescale Slope and Intercept a pixel reaches ${value}, outside ` +
          '−32768…32767, the range Emberline stores.',
      );
    }
    pixels[index] = value;
    if (value < min) min = value;
    if (value > max) max = value;
  }
  return { pixels, rescale, valueRange: { min, max } };
}

/** Reads one file; throws an InstanceRefusal for anything Emberline does not accept. */
export function readInstance(
  bytes: Uint8Array,
  label: string,
  limits: InstanceReadLimits,
): ParsedInstance {
  checkPreamble(bytes, label);
  checkTransferSyntax(bytes, label);
  const dataSet = parse(bytes, label);
  const characterSet = dataSet.string('x00080005') ?? '';
  const context: ReadContext = {
    byteArray: dataSet.byteArray,
    label,
    limits,
    isUtf8: /ISO_IR 192/.test(characterSet),
    isSigned: dataSet.uint16('x00280103') === 1,
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
  return { label, header, ...readPixels(dataSet, header, label) };
}
