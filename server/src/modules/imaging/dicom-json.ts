/**
 * Data sets in the DICOM JSON model (PS3.18 F.2): tags as eight upper-case hex digits, each
 * element its VR and its values. Person names carry their component groups; sequences hold
 * data sets; numbers of DS and IS are JSON numbers (null where a value could not be read).
 * Plain data, so that it crosses the worker boundary and lands in a json column unchanged.
 */

export interface DicomPersonName {
  Alphabetic?: string;
  Ideographic?: string;
  Phonetic?: string;
}

export type DicomJsonValue = string | number | null | DicomPersonName | DicomJsonDataset;

export interface DicomJsonElement {
  vr: string;
  Value?: DicomJsonValue[];
  /** Base64 of a binary value (OB, OW, UN…). */
  InlineBinary?: string;
}

export interface DicomJsonDataset {
  [tag: string]: DicomJsonElement;
}

/** A de-identified instance header as stored: new file meta (group 0002) and the data set. */
export interface StoredDicomHeader {
  meta: DicomJsonDataset;
  dataset: DicomJsonDataset;
}

/** The items of a sequence element (VR SQ); empty for any other element. */
export function sequenceItems(element: DicomJsonElement | undefined): DicomJsonDataset[] {
  if (!element || element.vr !== 'SQ') return [];
  return (element.Value ?? []).filter(
    (value): value is DicomJsonDataset => typeof value === 'object' && value !== null,
  );
}

/** The string values of an element (UI, CS, DA…), empty when absent. */
export function stringValues(dataset: DicomJsonDataset, tag: string): string[] {
  return (dataset[tag]?.Value ?? []).filter((value): value is string => typeof value === 'string');
}

/** The first string value of an element, or undefined. */
export function firstString(dataset: DicomJsonDataset, tag: string): string | undefined {
  return stringValues(dataset, tag)[0];
}

/** The numeric values of an element; a value that could not be read becomes NaN. */
export function numberValues(dataset: DicomJsonDataset, tag: string): number[] {
  return (dataset[tag]?.Value ?? []).map((value) => (typeof value === 'number' ? value : NaN));
}

/** The first numeric value of an element, or undefined when it has none. */
export function firstNumber(dataset: DicomJsonDataset, tag: string): number | undefined {
  const values = numberValues(dataset, tag);
  return values.length ? values[0] : undefined;
}
