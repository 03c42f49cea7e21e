/**
 * From the scanned image files of one series to a plan, and from the plan and the decoded
 * frames to one regular volume. A plan is made from headers alone (the study listing shows it
 * before any pixel is decoded): one series, CT or MR, consistent, its frames (a file each for
 * classic images, many in one file for Enhanced CT/MR) stacked by `geometryFromSlices` (DICOM
 * PS3.3 C.7.6.2.1.1: sorted along the slice normal, refusing mixed orientations, sizes and
 * spacings and missing or uneven slices).
 */
import {
  geometryFromSlices,
  imageModalities,
  SeriesGeometryError,
  voxelCount,
  type ImageModality,
  type SeriesCompression,
  type SeriesOrientationName,
  type VolumeGeometry,
  type VolumeValueUnit,
} from '@emberline/shared';
import type { ScannedImage } from './dicom-instance-reader';
import type { DecodedFile } from './dicom-read-pool';
import {
  firstNumber,
  firstString,
  numberValues,
  sequenceItems,
  stringValues,
  type DicomJsonDataset,
} from './dicom-json';
import type { AppliedRescale } from './image-series.entity';
import { ImagingRefusal } from './imaging-refusal';
import { transferSyntaxes } from './pixel-data';
import { phaseHintOf } from './series-phase';

/** An image file of a series, as scanned. */
export interface PlannedImage {
  label: string;
  scanned: ScannedImage;
}

/** A series checked and stacked from its headers: what the listing shows, what decoding fills. */
export interface SeriesPlan {
  seriesUid: string;
  modality: ImageModality;
  images: PlannedImage[];
  /** Every frame of every image, in image order: the slices before sorting. */
  slices: { image: number; frame: number; label: string }[];
  geometry: VolumeGeometry;
  /** `sliceOrder[k]` indexes `slices`: the slice that becomes slice k. */
  sliceOrder: number[];
  /** The header of the image holding slice k = 0, not yet de-identified. */
  firstSliceHeader: DicomJsonDataset;
  description: string;
  seriesNumber: number | null;
  sliceThicknessMm: number | null;
  orientation: SeriesOrientationName;
  phaseHint: string | null;
  compression: SeriesCompression;
}

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
  compression: SeriesCompression;
}

const tags = {
  sopInstanceUid: '00080018',
  modality: '00080060',
  seriesDescription: '0008103E',
  seriesInstanceUid: '0020000E',
  frameOfReferenceUid: '00200052',
  seriesNumber: '00200011',
  windowCenter: '00281050',
  windowWidth: '00281051',
  lossyImageCompression: '00282110',
  lossyImageCompressionRatio: '00282112',
  lossyImageCompressionMethod: '00282114',
  sharedFunctionalGroups: '52009229',
  frameVoiLut: '00289132',
};

/** The default window of CT without one of its own: abdomen, centre 40 HU, width 400 (common practice). */
const abdomenWindow = { centre: 40, width: 400 };

/** A code string fit to quote: CS characters only, at most 16. */
function quotable(value: string): string {
  return value.replace(/[^A-Z0-9 _]/gi, '').slice(0, 16) || '(empty)';
}

function requireSameValue(
  images: readonly PlannedImage[],
  tag: string,
  name: string,
  refusal: (values: Map<string, string[]>) => ImagingRefusal,
): string {
  const byValue = new Map<string, string[]>();
  for (const image of images) {
    const value = firstString(image.scanned.header, tag);
    if (!value) {
      throw new ImagingRefusal(400, 'malformed', `${image.label} lacks a ${name}.`);
    }
    byValue.set(value, [...(byValue.get(value) ?? []), image.label]);
  }
  if (byValue.size > 1) throw refusal(byValue);
  return [...byValue.keys()][0];
}

function checkDistinctInstances(images: readonly PlannedImage[]): void {
  const seen = new Map<string, string>();
  for (const image of images) {
    const uid = firstString(image.scanned.header, tags.sopInstanceUid);
    if (!uid) {
      throw new ImagingRefusal(
        400,
        'malformed',
        `${image.label} lacks a SOP Instance UID (0008,0018).`,
      );
    }
    const earlier = seen.get(uid);
    if (earlier) {
      throw new ImagingRefusal(
        400,
        'duplicate-instance',
        `${earlier} and ${image.label} are the same image (same SOP Instance UID); ` +
          'send each slice once.',
      );
    }
    seen.set(uid, image.label);
  }
}

function checkModality(images: readonly PlannedImage[]): ImageModality {
  const modality = requireSameValue(
    images,
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

function checkFrameOfReference(images: readonly PlannedImage[]): void {
  requireSameValue(
    images,
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

function stackGeometry(images: readonly PlannedImage[], slices: SeriesPlan['slices']) {
  try {
    return geometryFromSlices(
      slices.map(({ image, frame }) => {
        const { scanned } = images[image];
        const descriptor = scanned.frames[frame];
        return {
          imagePositionPatient: descriptor.imagePositionPatient,
          imageOrientationPatient: descriptor.imageOrientationPatient,
          pixelSpacing: descriptor.pixelSpacing,
          rows: scanned.layout.rows,
          columns: scanned.layout.columns,
        };
      }),
    );
  } catch (error) {
    if (error instanceof SeriesGeometryError) {
      // "Slice n" of the geometry counts the slices in the order they came.
      const detail = error.message.replace(/\b[Ss]lice (\d+)\b/g, (whole, number: string) => {
        const slice = slices[Number(number) - 1];
        if (!slice || /sorted stack/.test(error.message)) return whole;
        return whole.startsWith('s')
          ? slice.label[0].toLowerCase() + slice.label.slice(1)
          : slice.label;
      });
      throw new ImagingRefusal(400, `geometry:${error.problem}`, detail);
    }
    throw error;
  }
}

/** The nearest patient axis of the slice normal within 10°, else oblique (common practice). */
export function orientationName(sliceNormalLps: readonly number[]): SeriesOrientationName {
  const [x, y, z] = sliceNormalLps.map(Math.abs);
  const within = Math.cos((10 * Math.PI) / 180);
  if (z >= within) return 'axial';
  if (y >= within) return 'coronal';
  if (x >= within) return 'sagittal';
  return 'oblique';
}

/**
 * What the files say of the pixels' compression: the transfer syntax, and loss when the
 * syntax is lossy or Lossy Image Compression (0028,2110) is 01 (DICOM PS3.3 C.7.6.1.1.5: once
 * lossy, always marked). A syntax that may be either (JPEG-LS near-lossless, JPEG 2000) counts
 * as lossy until the codestreams say otherwise (`settleCompression`).
 */
function compressionOf(images: readonly PlannedImage[]): SeriesCompression {
  const uids = [...new Set(images.map((image) => image.scanned.transferSyntaxUid))];
  const uid = uids[0];
  const syntax = transferSyntaxes.get(uid);
  const headers = images.map((image) => image.scanned.header);
  const markedLossy = headers.some(
    (header) => firstString(header, tags.lossyImageCompression) === '01',
  );
  const markedLossless = headers.every(
    (header) => firstString(header, tags.lossyImageCompression) === '00',
  );
  const syntaxLossy = images.some((image) => {
    const loss = transferSyntaxes.get(image.scanned.transferSyntaxUid)?.loss;
    return loss === 'lossy' || (loss === 'depends' && !markedLossless);
  });
  const isLossy = markedLossy || syntaxLossy;
  const ratios = numberValues(headers[0], tags.lossyImageCompressionRatio).filter(
    (value) => Number.isFinite(value) && value > 0,
  );
  // A defined term (CS): upper case, digits, space and underscore, at most 16 characters.
  const methods = stringValues(headers[0], tags.lossyImageCompressionMethod)
    .map((method) => method.replace(/[^A-Z0-9 _]/g, '').slice(0, 16))
    .filter(Boolean);
  return {
    transferSyntaxUid: uid,
    transferSyntaxName: uids.length > 1 ? 'mixed' : (syntax?.name ?? uid),
    isLossy,
    // With several lossy steps, the last ratio and method are those of the newest (PS3.3 C.7.6.1.1.5).
    lossyRatio: isLossy ? (ratios.at(-1) ?? measuredRatio(images)) : null,
    lossyMethod: isLossy ? (methods.at(-1) ?? syntax?.lossyMethod ?? null) : null,
  };
}

/** Uncompressed over compressed bytes of the pixels, when the files carry no ratio. */
function measuredRatio(images: readonly PlannedImage[]): number | null {
  let stored = 0;
  let uncompressed = 0;
  for (const { scanned } of images) {
    stored += scanned.pixelDataBytes;
    uncompressed +=
      scanned.layout.rows *
      scanned.layout.columns *
      (scanned.layout.bitsAllocated / 8) *
      scanned.layout.frameCount;
  }
  return stored > 0 ? Math.round((10 * uncompressed) / stored) / 10 : null;
}

function descriptionOf(header: DicomJsonDataset, modality: string, seriesNumber: number | null) {
  const text = (firstString(header, tags.seriesDescription) ?? '')
    .replace(/[^\p{L}\p{N} .,:;()/+_-]/gu, '')
    .trim()
    .slice(0, 64);
  return text || `${modality} series${seriesNumber !== null ? ` ${seriesNumber}` : ''}`;
}

/** Checks the image files of one series and stacks them from their headers. */
export function planSeries(images: readonly PlannedImage[]): SeriesPlan {
  if (images.length === 0) {
    throw new ImagingRefusal(400, 'no-files', 'The upload holds no DICOM files.');
  }
  const seriesUid = requireSameValue(
    images,
    tags.seriesInstanceUid,
    'Series Instance UID (0020,000E)',
    (bySeries) =>
      new ImagingRefusal(
        400,
        'several-series',
        `The files belong to ${bySeries.size} series (by Series Instance UID).`,
      ),
  );
  checkDistinctInstances(images);
  const modality = checkModality(images);
  checkFrameOfReference(images);
  const slices = images.flatMap((image, imageIndex) =>
    image.scanned.frames.map((_, frame) => ({
      image: imageIndex,
      frame,
      label: image.scanned.frames.length > 1 ? `${image.label} frame ${frame + 1}` : image.label,
    })),
  );
  const { geometry, sliceOrder } = stackGeometry(images, slices);
  const first = slices[sliceOrder[0]];
  const firstImage = images[first.image].scanned;
  const header = firstImage.header;
  const seriesNumberValue = firstNumber(header, tags.seriesNumber);
  const seriesNumber =
    seriesNumberValue !== undefined && Number.isInteger(seriesNumberValue)
      ? seriesNumberValue
      : null;
  return {
    seriesUid,
    modality,
    images: [...images],
    slices,
    geometry,
    sliceOrder,
    firstSliceHeader: header,
    description: descriptionOf(header, modality, seriesNumber),
    seriesNumber,
    sliceThicknessMm:
      firstImage.frames[first.frame].sliceThicknessMm ??
      (geometry.dimensions[2] > 1 ? geometry.spacingMm[2] : null),
    orientation: orientationName(geometry.direction[2]),
    phaseHint: phaseHintOf(header),
    compression: compressionOf(images),
  };
}

function defaultWindow(
  header: DicomJsonDataset,
  modality: ImageModality,
  valueRange: { min: number; max: number },
): { centre: number; width: number } {
  // Enhanced images keep their window in the Frame VOI LUT functional group (PS3.3 C.7.6.16.2.10).
  const shared = sequenceItems(header[tags.sharedFunctionalGroups])[0];
  const voi = shared ? sequenceItems(shared[tags.frameVoiLut])[0] : undefined;
  const source = voi ?? header;
  const centre = firstNumber(source, tags.windowCenter);
  const width = firstNumber(source, tags.windowWidth);
  if (centre !== undefined && width !== undefined && Number.isFinite(centre) && width > 0) {
    return { centre, width };
  }
  if (modality === 'CT') return abdomenWindow;
  const span = Math.max(1, valueRange.max - valueRange.min);
  return { centre: valueRange.min + span / 2, width: span };
}

function appliedRescale(plan: SeriesPlan): AppliedRescale {
  const rescales = plan.images.flatMap((image) => image.scanned.frames.map((f) => f.rescale));
  const first = rescales[0];
  return {
    slope: first.slope,
    intercept: first.intercept,
    isUniform: rescales.every(
      (rescale) => rescale.slope === first.slope && rescale.intercept === first.intercept,
    ),
  };
}

/**
 * The compression once decoded: a codestream that shows lossy coding (JPEG-LS NEAR > 0, the
 * JPEG 2000 irreversible wavelet) makes the series lossy whatever its syntax claims; codestreams
 * that all say lossless clear a "may be lossy" syntax that the files do not mark lossy.
 */
function settleCompression(plan: SeriesPlan, decoded: readonly DecodedFile[]): SeriesCompression {
  const { compression } = plan;
  if (decoded.some((file) => file.decoded.isLossyByCodestream === true)) {
    const syntax = transferSyntaxes.get(compression.transferSyntaxUid);
    return {
      ...compression,
      isLossy: true,
      lossyRatio: compression.lossyRatio ?? measuredRatio(plan.images),
      lossyMethod: compression.lossyMethod ?? syntax?.lossyMethod ?? null,
    };
  }
  if (!compression.isLossy) return compression;
  const markedLossy = plan.images.some(
    (image) => firstString(image.scanned.header, tags.lossyImageCompression) === '01',
  );
  const syntaxAlwaysLossy = plan.images.some(
    (image) => transferSyntaxes.get(image.scanned.transferSyntaxUid)?.loss === 'lossy',
  );
  const allSayLossless = decoded.every((file) => file.decoded.isLossyByCodestream === false);
  if (!markedLossy && !syntaxAlwaysLossy && allSayLossless) {
    return { ...compression, isLossy: false, lossyRatio: null, lossyMethod: null };
  }
  return compression;
}

/** Stacks the decoded frames of a plan's images (given in the plan's image order). */
export function assembleSeries(plan: SeriesPlan, decoded: readonly DecodedFile[]): AssembledSeries {
  if (decoded.length !== plan.images.length || decoded.some((file) => !file)) {
    throw new Error('the decoded files do not match the series plan');
  }
  const { geometry, sliceOrder } = plan;
  const sliceVoxels = geometry.dimensions[0] * geometry.dimensions[1];
  const voxels = new Int16Array(voxelCount(geometry.dimensions));
  sliceOrder.forEach((index, k) => {
    const slice = plan.slices[index];
    const frame = decoded[slice.image].decoded.frames[slice.frame];
    if (!frame || frame.length !== sliceVoxels) {
      throw new ImagingRefusal(400, 'malformed', `${slice.label} did not decode to a whole slice.`);
    }
    voxels.set(frame, k * sliceVoxels);
  });
  let min = Infinity;
  let max = -Infinity;
  for (const file of decoded) {
    min = Math.min(min, file.decoded.valueRange.min);
    max = Math.max(max, file.decoded.valueRange.max);
  }
  const valueRange = { min, max };
  return {
    modality: plan.modality,
    geometry,
    voxels,
    valueUnit: plan.modality === 'CT' ? 'HU' : 'scanner-units',
    valueRange,
    rescaleApplied: appliedRescale(plan),
    window: defaultWindow(plan.firstSliceHeader, plan.modality, valueRange),
    seriesNumber: plan.seriesNumber,
    firstSliceHeader: plan.firstSliceHeader,
    compression: settleCompression(plan, decoded),
  };
}
