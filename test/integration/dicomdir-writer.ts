/**
 * Writes small DICOMDIRs byte by byte for the tests of the media directory reader, so that a
 * test can choose every link (and break one). The encoding follows the standard, from memory:
 * Explicit VR Little Endian (PS3.5 7.1.2), the Part 10 preamble, "DICM" and file meta (PS3.10
 * 7.1), the Basic Directory IOD (PS3.3 F.5) whose record links are byte offsets counted from
 * the first byte of the file, preamble included (PS3.3 F.3.2.1). `imaging-dicomdir.spec.ts`
 * checks the reader against DICOMDIRs dcmtk's dcmmkdir makes, which follow the same rule.
 * Only node built-ins here: the server's unit specs import this file.
 */

export const mediaStorageDirectoryStorage = '1.2.840.10008.1.3.10';
export const ctImageStorage = '1.2.840.10008.5.1.4.1.1.2';
const explicitVrLittleEndian = '1.2.840.10008.1.2.1';
/** An invented UID root for these files. */
const uidRoot = '1.2.826.0.1.3680043.10.99998';

/** Invented patient values a directory record carries: they must never come out. */
export const recordPatientName = 'Quill^Directory QXDIRNAME';
export const recordPatientId = 'QXDIRPATIENTID';

export interface RecordSpec {
  type: string;
  /** Referenced File ID (0004,1500), one component per value. */
  fileId?: string[];
  /** Record In-use Flag (0004,1410): false writes 0000H. */
  inUse?: boolean;
  children?: RecordSpec[];
}

export interface EncodedDirectory {
  bytes: Uint8Array;
  /** Per record, depth first: where its item starts and where its two link values are. */
  records: { offset: number; nextAt: number; lowerAt: number }[];
  /** Where the value of (0004,1200) is. */
  rootAt: number;
}

const longVrs = new Set(['OB', 'OW', 'OF', 'SQ', 'UT', 'UN', 'UC', 'UR', 'OD', 'OL', 'OV']);

function tagBytes(tag: string): number[] {
  const group = parseInt(tag.slice(0, 4), 16);
  const element = parseInt(tag.slice(4), 16);
  return [group & 0xff, group >> 8, element & 0xff, element >> 8];
}

function uint16(value: number): number[] {
  return [value & 0xff, (value >> 8) & 0xff];
}

function uint32(value: number): number[] {
  return [value & 0xff, (value >>> 8) & 0xff, (value >>> 16) & 0xff, (value >>> 24) & 0xff];
}

/** Text padded to an even length: UI with NUL, the other string VRs with a space. */
function text(value: string, vr: string): number[] {
  const bytes = [...value].map((character) => character.charCodeAt(0));
  if (bytes.length % 2 === 1) bytes.push(vr === 'UI' ? 0 : 0x20);
  return bytes;
}

export function element(tag: string, vr: string, value: number[]): number[] {
  const header = longVrs.has(vr)
    ? [...tagBytes(tag), vr.charCodeAt(0), vr.charCodeAt(1), 0, 0, ...uint32(value.length)]
    : [...tagBytes(tag), vr.charCodeAt(0), vr.charCodeAt(1), ...uint16(value.length)];
  return [...header, ...value];
}

export const stringElement = (tag: string, vr: string, value: string) =>
  element(tag, vr, text(value, vr));

/** Preamble, "DICM" and the file meta group, its group length first. */
export function part10Header(sopClassUid: string, sopInstanceUid: string): number[] {
  const meta = [
    ...element('00020001', 'OB', [0, 1]),
    ...stringElement('00020002', 'UI', sopClassUid),
    ...stringElement('00020003', 'UI', sopInstanceUid),
    ...stringElement('00020010', 'UI', explicitVrLittleEndian),
    ...stringElement('00020012', 'UI', `${uidRoot}.1`),
  ];
  return [
    ...new Array<number>(128).fill(0),
    ...text('DICM', 'CS'),
    ...element('00020000', 'UL', uint32(meta.length)),
    ...meta,
  ];
}

let instanceCounter = 0;

/** A small Part 10 file with the marker and a CT file meta: DICOM by its content. */
export function part10Stub(): Uint8Array {
  instanceCounter += 1;
  return Uint8Array.from([
    ...part10Header(ctImageStorage, `${uidRoot}.2.${instanceCounter}`),
    ...stringElement('00080060', 'CS', 'CT'),
  ]);
}

interface Laid {
  spec: RecordSpec;
  parent: Laid | undefined;
  siblings: Laid[];
  children: Laid[];
  content: number[];
  offset: number;
  nextAt: number;
  lowerAt: number;
}

function recordContent(spec: RecordSpec, next: number, lower: number): number[] {
  return [
    ...element('00041400', 'UL', uint32(next)),
    ...element('00041410', 'US', uint16(spec.inUse === false ? 0 : 0xffff)),
    ...element('00041420', 'UL', uint32(lower)),
    ...stringElement('00041430', 'CS', spec.type),
    ...(spec.fileId ? stringElement('00041500', 'CS', spec.fileId.join('\\')) : []),
    ...(spec.type === 'PATIENT'
      ? [
          ...stringElement('00100010', 'PN', recordPatientName),
          ...stringElement('00100020', 'LO', recordPatientId),
        ]
      : []),
  ];
}

/**
 * A DICOMDIR whose root entity holds `roots`. Its records lie in the sequence depth first, as
 * writers usually lay them, or in reverse when `isReversed`: the links, not the order of the
 * items, make the tree.
 */
export function encodeDirectory(
  roots: RecordSpec[],
  options: { sopClassUid?: string; isReversed?: boolean } = {},
): EncodedDirectory {
  const depthFirst: Laid[] = [];
  const lay = (specs: RecordSpec[], parent: Laid | undefined): Laid[] => {
    const siblings: Laid[] = [];
    for (const spec of specs) {
      const laid: Laid = {
        spec,
        parent,
        siblings,
        children: [],
        content: recordContent(spec, 0, 0),
        offset: 0,
        nextAt: 0,
        lowerAt: 0,
      };
      siblings.push(laid);
      depthFirst.push(laid);
      laid.children = lay(spec.children ?? [], laid);
    }
    return siblings;
  };
  const rootRecords = lay(roots, undefined);
  const header = part10Header(options.sopClassUid ?? mediaStorageDirectoryStorage, `${uidRoot}.3`);
  const fixedBeforeRoot = [
    ...header,
    ...stringElement('00041130', 'CS', 'EMBERTEST'),
    ...tagBytes('00041200'),
    ...text('UL', 'CS'),
    ...uint16(4),
  ];
  const rootAt = fixedBeforeRoot.length;
  // (0004,1200) and (0004,1202) of 12 bytes each, (0004,1212) of 10, the SQ header of 12.
  const sequenceStart = rootAt + 4 + 12 + 10 + 12;
  const order = options.isReversed ? [...depthFirst].reverse() : depthFirst;
  let position = sequenceStart;
  for (const laid of order) {
    laid.offset = position;
    // The item header (8 bytes), then (0004,1400) has its value at 8, (0004,1420) at 8+12+10+8.
    laid.nextAt = position + 8 + 8;
    laid.lowerAt = position + 8 + 12 + 10 + 8;
    position += 8 + laid.content.length;
  }
  const items = order.flatMap((laid) => {
    const index = laid.siblings.indexOf(laid);
    const next = laid.siblings[index + 1]?.offset ?? 0;
    const lower = laid.children[0]?.offset ?? 0;
    const content = recordContent(laid.spec, next, lower);
    return [...tagBytes('FFFEE000'), ...uint32(content.length), ...content];
  });
  const bytes = Uint8Array.from([
    ...fixedBeforeRoot,
    ...uint32(rootRecords[0]?.offset ?? 0),
    ...element('00041202', 'UL', uint32(rootRecords.at(-1)?.offset ?? 0)),
    ...element('00041212', 'US', uint16(0)),
    ...element('00041220', 'SQ', items),
  ]);
  return {
    bytes,
    records: depthFirst.map(({ offset, nextAt, lowerAt }) => ({ offset, nextAt, lowerAt })),
    rootAt,
  };
}

/** Overwrites the 4-byte little-endian value at `at`: to break a link. */
export function setUint32(bytes: Uint8Array, at: number, value: number): void {
  new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).setUint32(at, value, true);
}

/** One patient, one study, one series of `count` images named DICOM/ST000001/SE000001/IMnnnnnn. */
export function seriesRecords(count: number, series = 'SE000001'): RecordSpec[] {
  return [
    {
      type: 'PATIENT',
      children: [
        {
          type: 'STUDY',
          children: [{ type: 'SERIES', children: imageRecords(count, series) }],
        },
      ],
    },
  ];
}

export function imageRecords(count: number, series = 'SE000001'): RecordSpec[] {
  return Array.from({ length: count }, (_, index) => ({
    type: 'IMAGE',
    fileId: ['DICOM', 'ST000001', series, `IM${String(index + 1).padStart(6, '0')}`],
  }));
}
