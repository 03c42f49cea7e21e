/**
 * Reads the structure of a DICOMDIR, the media storage directory of DICOM export media (PS3.10
 * section 8; its content is the Basic Directory IOD, PS3.3 Annex F): which files its
 * PATIENT → STUDY → SERIES → IMAGE records name, in the directory's order. Only the
 * directory's own attributes (group 0004) are read: the patient, study and series attributes
 * the records also carry are never looked at, kept or quoted. Runs in the reading worker.
 *
 * The records form a tree by byte offsets, each counted from the first byte of the file (the
 * preamble): (0004,1200) is the first record of the root, each record's (0004,1400) its next
 * sibling and (0004,1420) the first record of the entity below it, 0 for none (PS3.3 F.3.2.1
 * and F.3.2.2, from memory). The walk follows them with a stack, visits no record twice and
 * visits no record the sequence does not hold, so a damaged or hostile directory ends in a
 * refusal, never in a loop.
 */
import dicomParser, { type DataSet } from 'dicom-parser';
import { InstanceRefusal } from './dicom-instance-reader';
import type { RefusalReason } from './imaging-refusal';

/** Media Storage Directory Storage (PS3.4 Annex B / PS3.6 Table A-1). */
export const mediaStorageDirectoryStorage = '1.2.840.10008.1.3.10';

export interface DirectoryCounts {
  patientCount: number;
  studyCount: number;
  seriesCount: number;
  imageCount: number;
}

export interface DirectoryReference {
  /** The components of Referenced File ID (0004,1500), relative to the DICOMDIR's folder. */
  fileId: string[];
  /** Directory Record Type (0004,1430) of the record that names the file, e.g. IMAGE. */
  recordType: string;
}

export interface MediaDirectory {
  /** Files named by the records in use reached from the root, in the directory's order. */
  references: DirectoryReference[];
  counts: DirectoryCounts;
}

export interface DirectoryLimits {
  /** Directory records one DICOMDIR may hold. */
  maxRecords: number;
}

/** Components of one File ID; PS3.10 allows 8, some writers go deeper. */
const maxFileIdComponents = 16;
/** PS3.10 allows 8 characters a component; longer names come from media mapped by hand. */
const maxComponentLength = 64;

function refuse(status: number, reason: RefusalReason, detail: string): never {
  throw new InstanceRefusal({ status, reason, detail });
}

/** The 128-byte preamble followed by "DICM" (PS3.10 7.1): the mark of a DICOM file. */
export function hasPart10Marker(bytes: Uint8Array): boolean {
  return (
    bytes.length >= 132 &&
    bytes[128] === 0x44 &&
    bytes[129] === 0x49 &&
    bytes[130] === 0x43 &&
    bytes[131] === 0x4d
  );
}

/** dicom-parser throws strings, Errors and { exception, dataSet } objects. */
function innerError(error: unknown): unknown {
  return typeof error === 'object' && error !== null && 'exception' in error
    ? (error as { exception: unknown }).exception
    : error;
}

/** The parser's message, reduced to characters that cannot carry anything from the file. */
function parserMessage(error: unknown): string {
  const inner = innerError(error);
  const text = inner instanceof Error ? inner.message : String(inner);
  return text
    .replace(/^dicomParser[.:][\w.]*:?\s*/, '')
    .replace(/[^\w .,:;()'-]/g, '')
    .slice(0, 160);
}

function parseOrRefuse<T>(label: string, parse: () => T): T {
  try {
    return parse();
  } catch (error) {
    const inner = innerError(error);
    if (inner instanceof RangeError && /call stack/i.test(inner.message)) {
      refuse(400, 'too-complex', `${label} nests its attributes too deeply to be read.`);
    }
    const message = parserMessage(error);
    if (/past end|overread|overrun|greater than or equal to|eof|maxP\s?osition/i.test(message)) {
      refuse(400, 'dicomdir', `${label} is a truncated DICOMDIR: it ends inside an attribute.`);
    }
    refuse(400, 'dicomdir', `${label} is a damaged DICOMDIR: it cannot be read (${message}).`);
  }
}

function quotableUid(uid: string): string {
  return /^[0-9.]{1,64}$/.test(uid) ? uid : '(not a valid UID)';
}

/** An offset attribute (VR UL): undefined when absent, a refusal when not 4 bytes long. */
function offsetOf(dataSet: DataSet, tag: string, name: string, label: string): number | undefined {
  const element = dataSet.elements[tag];
  if (!element) return undefined;
  if (element.length !== 4) {
    refuse(400, 'dicomdir', `${label} is a damaged DICOMDIR: an ${name} is not 4 bytes long.`);
  }
  return dataSet.uint32(tag);
}

/** The record type as a short upper-case word fit to quote ('UNKNOWN' otherwise). */
function recordTypeOf(dataSet: DataSet): string {
  const value = (dataSet.string('x00041430') ?? '').toUpperCase();
  return /^[A-Z0-9 ]{1,16}$/.test(value) ? value : 'UNKNOWN';
}

function fileIdOf(dataSet: DataSet, label: string): string[] | undefined {
  const element = dataSet.elements.x00041500;
  if (!element || element.length === 0) return undefined;
  const components = (dataSet.string('x00041500') ?? '').split('\\').map((part) => part.trim());
  const isRelativePath =
    components.length <= maxFileIdComponents &&
    components.every(
      (part) =>
        part.length > 0 &&
        part.length <= maxComponentLength &&
        part !== '.' &&
        part !== '..' &&
        /^[\x21-\x7e]+$/.test(part) &&
        !part.includes('/') &&
        !part.includes(':'),
    );
  if (!isRelativePath) {
    refuse(
      400,
      'dicomdir',
      `${label} is a damaged DICOMDIR: a Referenced File ID (0004,1500) is not a path within ` +
        'the folder of the DICOMDIR.',
    );
  }
  return components;
}

/** Reads a DICOMDIR's records, or refuses it with a detail that names `label`. */
export function readMediaDirectory(
  bytes: Uint8Array,
  label: string,
  limits: DirectoryLimits,
): MediaDirectory {
  if (!hasPart10Marker(bytes)) {
    refuse(
      400,
      'dicomdir',
      `${label} is named DICOMDIR but is not a DICOM file: it lacks the "DICM" marker after ` +
        'the 128-byte preamble (DICOM PS3.10 7.1).',
    );
  }
  // The file meta first: a file that only bears the name is not parsed any further.
  const meta = parseOrRefuse(label, () => dicomParser.readPart10Header(bytes));
  const sopClass = meta.string('x00020002')?.replace(/\0/g, '').trim() ?? '';
  if (sopClass !== mediaStorageDirectoryStorage) {
    refuse(
      400,
      'dicomdir',
      `${label} is named DICOMDIR but is not a media directory: its Media Storage SOP Class ` +
        `UID (0002,0002) is ${sopClass ? quotableUid(sopClass) : 'missing'}, not ` +
        `${mediaStorageDirectoryStorage} (Media Storage Directory Storage).`,
    );
  }
  const dataSet = parseOrRefuse(label, () => dicomParser.parseDicom(bytes));
  if (dataSet.warnings.some((warning) => /eof/i.test(warning))) {
    refuse(400, 'dicomdir', `${label} is a truncated DICOMDIR: it ends inside its records.`);
  }

  const items = dataSet.elements.x00041220?.items ?? [];
  if (items.length > limits.maxRecords) {
    refuse(
      413,
      'dicomdir',
      `${label} holds ${items.length} directory records; Emberline reads a DICOMDIR of at most ` +
        `${limits.maxRecords}.`,
    );
  }
  // An item's tag starts 8 bytes (tag and length) before its data.
  const recordAt = new Map<number, DataSet>();
  for (const item of items) {
    if (item.dataSet) recordAt.set(item.dataOffset - 8, item.dataSet);
  }

  const rootOffset = offsetOf(
    dataSet,
    'x00041200',
    'Offset of the First Directory Record (0004,1200)',
    label,
  );
  if (rootOffset === undefined && items.length > 0) {
    refuse(
      400,
      'dicomdir',
      `${label} is a damaged DICOMDIR: it lacks the Offset of the First Directory Record of ` +
        'the Root Directory Entity (0004,1200).',
    );
  }

  const counts: DirectoryCounts = { patientCount: 0, studyCount: 0, seriesCount: 0, imageCount: 0 };
  const references: DirectoryReference[] = [];
  const visited = new Set<number>();
  // Offsets still to visit; the lower level is pushed last so that it is visited before the
  // next sibling: the records come out in the directory's order (depth first).
  const pending: number[] = [rootOffset ?? 0];
  while (pending.length > 0) {
    const offset = pending.pop() ?? 0;
    if (offset === 0) continue;
    if (visited.has(offset)) {
      refuse(
        400,
        'dicomdir',
        `${label} is a damaged DICOMDIR: its records link to a record already read ` +
          `(byte ${offset}), so the links loop or cross.`,
      );
    }
    visited.add(offset);
    const record = recordAt.get(offset);
    if (!record) {
      refuse(
        400,
        'dicomdir',
        `${label} is a damaged DICOMDIR: a record link points to byte ${offset}, where no ` +
          'directory record starts.',
      );
    }
    const next = offsetOf(record, 'x00041400', 'Offset of the Next Directory Record', label);
    pending.push(next ?? 0);
    // Record In-use Flag (0004,1410), retired: 0000H marks a record no longer in use.
    if (record.elements.x00041410?.length === 2 && record.uint16('x00041410') === 0) continue;
    const lower = offsetOf(
      record,
      'x00041420',
      'Offset of Referenced Lower-Level Directory Entity',
      label,
    );
    pending.push(lower ?? 0);

    const recordType = recordTypeOf(record);
    if (recordType === 'PATIENT') counts.patientCount += 1;
    else if (recordType === 'STUDY') counts.studyCount += 1;
    else if (recordType === 'SERIES') counts.seriesCount += 1;
    else if (recordType === 'IMAGE') counts.imageCount += 1;
    const fileId = fileIdOf(record, label);
    if (fileId) references.push({ fileId, recordType });
  }
  return { references, counts };
}
