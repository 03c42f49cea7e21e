/**
 * From the instances of one upload to one regular volume: one series, CT or MR, single-frame,
 * consistent; the slices stacked by `geometryFromSlices` (DICOM PS3.3 C.7.6.2.1.1: sorted along
 * the slice normal, refusing mixed orientations, sizes and spacings and missing or uneven
 * slices). Several series in one upload are refused, not split: the presenter chooses what the
 * board sees, one series at a time, and a refusal never stores half of what was sent.
 */
import {
  geometryFromSlices,
  imageModalities,
  SeriesGeometryError,
  voxelCount,
  type ImageModality,
  type VolumeGeometry,
  type VolumeValueUnit,
} from '@emberline/shared';
import type { ParsedInstance } from './dicom-instance-reader';
import { firstNumber, firstString, numberValues, type DicomJsonDataset } from './dicom-json';
import type { AppliedRescale } from './image-series.entity';
import { ImagingRefusal } from './imaging-refusal';

export interface AssembledSeries {
  modality: ImageModality;
  geometry: VolumeGeometry;
  /** int16 voxels, i fastest (index i + nx·(j + ny·k)). */
  voxels: Int16Array;
  valueUnit: VolumeValueUnit;
  valueRange: { min: number; max: number };
  rescaleApplied: AppliedRescale;
  window: { centre: number; width: number };
  seriesNumber: number | null;
  /** The header of the first slice of the sorted stack (k = 0), not yet de-identified. */
  firstSliceHeader: DicomJsonDataset;
}

const tags = {
  sopInstanceUid: '00080018',
  modality: '00080060',
  seriesInstanceUid: '0020000E',
  frameOfReferenceUid: '00200052',
  seriesNumber: '00200011',
  imagePositionPatient: '00200032',
  imageOrientationPatient: '00200037',
  pixelSpacing: '00280030',
  rows: '00280010',
  columns: '00280011',
  burnedInAnnotation: '00280301',
  windowCenter: '00281050',
  windowWidth: '00281051',
};

/** The default window of CT without one of its own: abdomen, centre 40 HU, width 400 (common practice). */
const abdomenWindow = { centre: 40, width: 400 };

/** A code string fit to quote: CS characters only, at most 16. */
function quotable(value: string): string {
  return value.replace(/[^A-Z0-9 _]/gi, '').slice(0, 16) || '(empty)';
}

function listOf(labels: string[]): string {
  return labels.length <= 3 ? labels.join(', ') : `${labels.slice(0, 3).join(', ')}…`;
}

function requireSameValue(
  instances: readonly ParsedInstance[],
  tag: string,
  name: string,
  refusal: (values: Map<string, string[]>) => ImagingRefusal,
): string {
  const byValue = new Map<string, string[]>();
  for (const instance of instances) {
    const value = firstString(instance.header, tag);
    if (!value) {
      throw new ImagingRefusal(400, 'malformed', `${instance.label} lacks a ${name}.`);
    }
    byValue.set(value, [...(byValue.get(value) ?? []), instance.label]);
  }
  if (byValue.size > 1) throw refusal(byValue);
  return [...byValue.keys()][0];
}

function checkOneSeries(instances: readonly ParsedInstance[]): void {
  requireSameValue(
    instances,
    tags.seriesInstanceUid,
    'Series Instance UID (0020,000E)',
    (bySeries) =>
      new ImagingRefusal(
        400,
        'several-series',
        `The upload holds ${bySeries.size} series (by Series Instance UID): ` +
          [...bySeries.values()]
            .map((labels) => `${labels.length} file${labels.length === 1 ? '' : 's'}`)
            .join(', ') +
          '. Upload one series at a time.',
      ),
  );
  const seen = new Map<string, string>();
  for (const instance of instances) {
    const uid = firstString(instance.header, tags.sopInstanceUid);
    if (!uid) {
      throw new ImagingRefusal(
        400,
        'malformed',
        `${instance.label} lacks a SOP Instance UID (0008,0018).`,
      );
    }
    const earlier = seen.get(uid);
    if (earlier) {
      throw new ImagingRefusal(
        400,
        'duplicate-instance',
        `${earlier} and ${instance.label} are the same image (same SOP Instance UID); ` +
          'send each slice once.',
      );
    }
    seen.set(uid, instance.label);
  }
}

function checkModality(instances: readonly ParsedInstance[]): ImageModality {
  const modality = requireSameValue(
    instances,
    tags.modality,
    'Modality (0008,0060)',
    (byModality) =>
      new ImagingRefusal(
        400,
        'inconsistent-series',
        `The files mix modalities (${[...byModality.keys()].map(quotable).join(', ')}); a ` +
          'series has one.',
      ),
  );
  if (!(imageModalities as readonly string[]).includes(modality)) {
    throw new ImagingRefusal(
      415,
      'modality',
      `The series' modality is ${quotable(modality)}; Emberline takes CT and MR series only.`,
    );
  }
  return modality as ImageModality;
}

function checkFrameOfReference(instances: readonly ParsedInstance[]): void {
  requireSameValue(
    instances,
    tags.frameOfReferenceUid,
    'Frame of Reference UID (0020,0052)',
    (byFrame) =>
      new ImagingRefusal(
        400,
        'inconsistent-series',
        `The slices name ${byFrame.size} frames of reference (Frame of Reference UID); the ` +
          'slices of one volume share one.',
      ),
  );
}

function checkNoBurnedInAnnotation(instances: readonly ParsedInstance[]): void {
  const annotated = instances.filter(
    (instance) => firstString(instance.header, tags.burnedInAnnotation) === 'YES',
  );
  if (annotated.length) {
    throw new ImagingRefusal(
      415,
      'burned-in-annotation',
      `${listOf(annotated.map((instance) => instance.label))} declare Burned In Annotation ` +
        '(0028,0301) YES: their pixels may show identifying text, which de-identification of ' +
        'the header does not remove. Export the series without annotations.',
    );
  }
}

function stackGeometry(instances: readonly ParsedInstance[]) {
  try {
    return geometryFromSlices(
      instances.map((instance) => ({
        imagePositionPatient: numberValues(instance.header, tags.imagePositionPatient),
        imageOrientationPatient: numberValues(instance.header, tags.imageOrientationPatient),
        pixelSpacing: numberValues(instance.header, tags.pixelSpacing),
        rows: firstNumber(instance.header, tags.rows) ?? NaN,
        columns: firstNumber(instance.header, tags.columns) ?? NaN,
      })),
    );
  } catch (error) {
    if (error instanceof SeriesGeometryError) {
      // "Slice n" of the geometry counts the files in the order they came.
      const detail = error.message.replace(/\b[Ss]lice (\d+)\b/g, (whole, number: string) => {
        const instance = instances[Number(number) - 1];
        if (!instance || /sorted stack/.test(error.message)) return whole;
        return whole.startsWith('s')
          ? instance.label[0].toLowerCase() + instance.label.slice(1)
          : instance.label;
      });
      throw new ImagingRefusal(400, `geometry:${error.problem}`, detail);
    }
    throw error;
  }
}

function defaultWindow(
  header: DicomJsonDataset,
  modality: ImageModality,
  valueRange: { min: number; max: number },
): { centre: number; width: number } {
  const centre = firstNumber(header, tags.windowCenter);
  const width = firstNumber(header, tags.windowWidth);
  if (centre !== undefined && width !== undefined && Number.isFinite(centre) && width > 0) {
    return { centre, width };
  }
  if (modality === 'CT') return abdomenWindow;
  const span = Math.max(1, valueRange.max - valueRange.min);
  return { centre: valueRange.min + span / 2, width: span };
}

function appliedRescale(instances: readonly ParsedInstance[]): AppliedRescale {
  const first = instances[0].rescale;
  return {
    slope: first.slope,
    intercept: first.intercept,
    isUniform: instances.every(
      (instance) =>
        instance.rescale.slope === first.slope && instance.rescale.intercept === first.intercept,
    ),
  };
}

/** Checks the instances of an upload and stacks them; throws an ImagingRefusal otherwise. */
export function assembleSeries(instances: readonly ParsedInstance[]): AssembledSeries {
  if (instances.length === 0) {
    throw new ImagingRefusal(400, 'no-files', 'The upload holds no DICOM files.');
  }
  checkOneSeries(instances);
  const modality = checkModality(instances);
  checkFrameOfReference(instances);
  checkNoBurnedInAnnotation(instances);
  const { geometry, sliceOrder } = stackGeometry(instances);
  const sliceVoxels = geometry.dimensions[0] * geometry.dimensions[1];
  const voxels = new Int16Array(voxelCount(geometry.dimensions));
  let min = Infinity;
  let max = -Infinity;
  sliceOrder.forEach((index, k) => {
    const instance = instances[index];
    voxels.set(instance.pixels, k * sliceVoxels);
    min = Math.min(min, instance.valueRange.min);
    max = Math.max(max, instance.valueRange.max);
  });
  const firstSlice = instances[sliceOrder[0]];
  const valueRange = { min, max };
  const seriesNumber = firstNumber(firstSlice.header, tags.seriesNumber);
  return {
    modality,
    geometry,
    voxels,
    valueUnit: modality === 'CT' ? 'HU' : 'scanner-units',
    valueRange,
    rescaleApplied: appliedRescale(instances),
    window: defaultWindow(firstSlice.header, modality, valueRange),
    seriesNumber:
      seriesNumber !== undefined && Number.isInteger(seriesNumber) ? seriesNumber : null,
    firstSliceHeader: firstSlice.header,
  };
}
