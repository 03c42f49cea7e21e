/**
 * De-identification of one instance header, in memory, by the table of
 * `confidentiality-profile.ts` (DICOM PS3.15 Annex E, Basic Application Level Confidentiality
 * Profile, with the Modified Dates option). Private attributes, curves, overlays, group
 * lengths and any attribute the table does not name are removed; sequences are cleaned item by
 * item with the same table; the file meta is replaced, and the attributes that record the
 * de-identification are added.
 */
import { deidentificationMethodCodes } from '@emberline/shared';
import {
  isPrivateTag,
  isRemovedRepeatingGroup,
  profileRuleFor,
  type ProfileAction,
} from './confidentiality-profile';
import { shiftDicomDate, shiftDicomDateTime } from './date-shift';
import {
  firstString,
  sequenceItems,
  type DicomJsonDataset,
  type DicomJsonElement,
  type DicomJsonValue,
  type StoredDicomHeader,
} from './dicom-json';

export interface DeidentificationContext {
  /** The replacement of a UID: the same for the same original within a case. */
  replaceUid: (original: string) => string;
  /** The case's date shift, whole days (negative: into the past). */
  dateShiftDays: number;
}

/** De-identification Method (0012,0063): LO, 64 characters a value at most. */
export const deidentificationMethod = [
  'Emberline ingest de-identification, version 1',
  'DICOM PS3.15 Annex E Basic Application Level Confidentiality',
  'Private and unlisted attributes removed; UIDs replaced per case',
  'Dates shifted per case by whole days; times of day kept',
];

/** Emberline's Implementation Class UID (0002,0012): a fixed UUID-derived UID (PS3.5 B.2). */
export const implementationClassUid = '2.25.155518793159035087696429175383376751365';
export const implementationVersionName = 'EMBERLINE_1';
export const explicitVrLittleEndian = '1.2.840.10008.1.2.1';

const dummyByVr: Record<string, DicomJsonValue> = {
  AE: 'REMOVED',
  AS: '000Y',
  CS: 'REMOVED',
  DA: '19000101',
  DS: 0,
  DT: '19000101000000',
  FD: 0,
  FL: 0,
  IS: 0,
  LO: 'REMOVED',
  LT: 'REMOVED',
  PN: { Alphabetic: 'REMOVED' },
  SH: 'REMOVED',
  SL: 0,
  SS: 0,
  ST: 'REMOVED',
  TM: '000000',
  UC: 'REMOVED',
  UL: 0,
  US: 0,
  UT: 'REMOVED',
};

function isGroupLength(tag: string): boolean {
  return tag.endsWith('0000');
}

function actionFor(tag: string): ProfileAction {
  const rule = profileRuleFor(tag);
  if (!rule) return 'X';
  return rule.withModifiedDates ?? rule.action;
}

function copyValue(value: DicomJsonValue): DicomJsonValue {
  return typeof value === 'object' && value !== null ? { ...value } : value;
}

function cleanSequence(
  element: DicomJsonElement,
  context: DeidentificationContext,
): DicomJsonElement {
  return { vr: 'SQ', Value: sequenceItems(element).map((item) => cleanDataset(item, context)) };
}

function replaceUids(element: DicomJsonElement, context: DeidentificationContext) {
  const values = (element.Value ?? []).filter(
    (value): value is string => typeof value === 'string' && value.length > 0,
  );
  return { vr: 'UI', Value: values.map((value) => context.replaceUid(value)) };
}

function withValues(vr: string, values: DicomJsonValue[]): DicomJsonElement {
  return values.length ? { vr, Value: values } : { vr };
}

/** C: dates moved by the case's shift; a value that is not a date is dropped. */
function cleanTemporal(
  element: DicomJsonElement,
  context: DeidentificationContext,
): DicomJsonElement | undefined {
  const shift =
    element.vr === 'DA' ? shiftDicomDate : element.vr === 'DT' ? shiftDicomDateTime : undefined;
  if (element.vr === 'SQ') return cleanSequence(element, context);
  // Nothing else can be cleaned reliably here (free text may name anyone): removed.
  if (!shift) return undefined;
  const shifted = (element.Value ?? [])
    .map((value) => (typeof value === 'string' ? shift(value, context.dateShiftDays) : null))
    .filter((value): value is string => value !== null);
  return withValues(element.vr, shifted);
}

function cleanElement(
  element: DicomJsonElement,
  action: ProfileAction,
  context: DeidentificationContext,
): DicomJsonElement | undefined {
  switch (action) {
    case 'X':
      return undefined;
    case 'Z':
      return { vr: element.vr };
    case 'D': {
      if (element.vr === 'SQ') return cleanSequence(element, context);
      if (element.vr === 'UI') return replaceUids(element, context);
      const dummy = dummyByVr[element.vr];
      return dummy === undefined ? { vr: element.vr } : { vr: element.vr, Value: [dummy] };
    }
    case 'K': {
      if (element.vr === 'SQ') return cleanSequence(element, context);
      const kept: DicomJsonElement = { vr: element.vr };
      if (element.Value) kept.Value = element.Value.map(copyValue);
      if (element.InlineBinary !== undefined) kept.InlineBinary = element.InlineBinary;
      return kept;
    }
    case 'C':
      return cleanTemporal(element, context);
    case 'U':
      if (element.vr === 'SQ') return cleanSequence(element, context);
      return element.vr === 'UI' ? replaceUids(element, context) : undefined;
  }
}

function sortedByTag(dataset: DicomJsonDataset): DicomJsonDataset {
  return Object.fromEntries(Object.entries(dataset).sort(([a], [b]) => (a < b ? -1 : 1)));
}

/** One data set (or sequence item) cleaned by the table; nothing of the input is modified. */
export function cleanDataset(
  dataset: DicomJsonDataset,
  context: DeidentificationContext,
): DicomJsonDataset {
  const cleaned: DicomJsonDataset = {};
  for (const [tag, element] of Object.entries(dataset)) {
    if (isPrivateTag(tag) || isRemovedRepeatingGroup(tag) || isGroupLength(tag)) continue;
    // The file meta is rebuilt, never copied.
    if (tag.startsWith('0002')) continue;
    const result = cleanElement(element, actionFor(tag), context);
    if (result) cleaned[tag] = result;
  }
  return sortedByTag(cleaned);
}

const code = (value: string, scheme: string, meaning: string): DicomJsonDataset => ({
  '00080100': { vr: 'SH', Value: [value] },
  '00080102': { vr: 'SH', Value: [scheme] },
  '00080104': { vr: 'LO', Value: [meaning] },
});

/** The attributes that record the de-identification (PS3.15 E.1.1; PS3.3 C.7.1.1, memory). */
function deidentificationAttributes(): DicomJsonDataset {
  return {
    // Patient Identity Removed
    '00120062': { vr: 'CS', Value: ['YES'] },
    // De-identification Method
    '00120063': { vr: 'LO', Value: [...deidentificationMethod] },
    // De-identification Method Code Sequence
    '00120064': {
      vr: 'SQ',
      Value: deidentificationMethodCodes.map((entry) =>
        code(entry.code, entry.scheme, entry.meaning),
      ),
    },
    // Longitudinal Temporal Information Modified (from memory)
    '00280303': { vr: 'CS', Value: ['MODIFIED'] },
  };
}

/** New file meta information (PS3.10 7.1) for a cleaned data set: nothing of the old one. */
function replacementFileMeta(dataset: DicomJsonDataset): DicomJsonDataset {
  const meta: DicomJsonDataset = {
    // File Meta Information Version 00 01
    '00020001': { vr: 'OB', InlineBinary: 'AAE=' },
    '00020002': { vr: 'UI', Value: [firstString(dataset, '00080016') ?? ''] },
    '00020003': { vr: 'UI', Value: [firstString(dataset, '00080018') ?? ''] },
    '00020010': { vr: 'UI', Value: [explicitVrLittleEndian] },
    '00020012': { vr: 'UI', Value: [implementationClassUid] },
    '00020013': { vr: 'SH', Value: [implementationVersionName] },
  };
  return meta;
}

/**
 * The stored form of an instance header: cleaned by the table, the de-identification
 * attributes added, a new file meta. Any Part 10 file written from it gets a zero preamble.
 */
export function deidentifyHeader(
  dataset: DicomJsonDataset,
  context: DeidentificationContext,
): StoredDicomHeader {
  const cleaned = sortedByTag({
    ...cleanDataset(dataset, context),
    ...deidentificationAttributes(),
  });
  return { meta: replacementFileMeta(cleaned), dataset: cleaned };
}

/** The UIDs `deidentifyHeader` will ask to replace, found by the same walk over the table. */
export function uidsToReplace(dataset: DicomJsonDataset): string[] {
  const found = new Set<string>();
  cleanDataset(dataset, {
    replaceUid: (original) => {
      found.add(original);
      return original;
    },
    dateShiftDays: 0,
  });
  return [...found];
}
