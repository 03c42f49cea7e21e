/**
 * Imaging API: the series a case holds, and the wire format of a stored volume.
 *
 * A volume travels as one binary body, `application/octet-stream`, laid out as
 *   bytes 0–7     the ASCII magic `EMBERVOL`
 *   bytes 8–11    the byte length H of the header that follows, uint32 little-endian
 *   bytes 12…     the header: ASCII JSON (`VolumeFileHeader`), padded with spaces so that the
 *                 voxels start on a multiple of 8 bytes
 *   then          the voxels: int16 little-endian, i (column) fastest, then j (row), then k
 *                 (slice) — index i + nx·(j + ny·k) — in the unit of `valueUnit`.
 * The file store holds exactly these bytes, so the server streams them unchanged.
 */
import { z } from 'zod';
import { decodeStoredFilePreamble, encodeStoredFilePreamble } from './stored-file-preamble';
import type { GridDimensions, VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';

export const imageModalities = ['CT', 'MR'] as const;
export type ImageModality = (typeof imageModalities)[number];

/** Hounsfield units for CT (Rescale Slope/Intercept applied); the scanner's own scale for MR. */
export const volumeValueUnits = ['HU', 'scanner-units'] as const;
export type VolumeValueUnit = (typeof volumeValueUnits)[number];

/**
 * Codes of the De-identification Method Code Sequence (0012,0064), coding scheme DCM (DICOM
 * PS3.16 CID 7050, from memory): the Basic Application Level Confidentiality Profile and the
 * option Emberline applies to dates.
 */
export const deidentificationMethodCodes = [
  { code: '113100', scheme: 'DCM', meaning: 'Basic Application Confidentiality Profile' },
  {
    code: '113107',
    scheme: 'DCM',
    meaning: 'Retain Longitudinal Temporal Information Modified Dates Option',
  },
] as const;

/** How the stored header and volume of a series were de-identified on ingest. */
export interface DeidentificationRecord {
  /** Patient Identity Removed (0012,0062) = YES. */
  patientIdentityRemoved: true;
  profile: 'DICOM PS3.15 Annex E Basic Application Level Confidentiality Profile';
  /** The De-identification Method Code Sequence (0012,0064) written into the header. */
  methodCodes: { code: string; scheme: string; meaning: string }[];
  /** De-identification Method (0012,0063), as written. */
  method: string[];
  /**
   * Dates (DA, and the date part of DT) moved back by a whole number of days, the same for
   * every series of a case; times of day kept. The shift itself is never stored.
   */
  dateOption: 'shifted-per-case';
}

/** Where a series' voxel axes point, unit vectors in LPS. */
export interface SeriesOrientation {
  /** Row direction, the first triplet of Image Orientation (Patient): i increases along it. */
  rowLps: Vec3;
  /** Column direction, the second triplet: j increases along it. */
  columnLps: Vec3;
  /** Slice normal, row × column: k increases along it. */
  sliceNormalLps: Vec3;
}

/** One stored series of a case, de-identified. */
export interface ImageSeriesView {
  id: string;
  caseId: string;
  modality: ImageModality;
  /** [columns, rows, slices]. */
  dimensions: GridDimensions;
  /** [Δi, Δj, Δk], millimetres. */
  spacingMm: Vec3;
  /** Centre of voxel (0, 0, 0), LPS, millimetres. */
  originLps: Vec3;
  orientation: SeriesOrientation;
  sliceCount: number;
  valueUnit: VolumeValueUnit;
  valueRange: { min: number; max: number };
  /** Default display window, in `valueUnit`. */
  window: { centre: number; width: number };
  /** Series Number (0020,0011) as received, or null. */
  seriesNumber: number | null;
  /** Byte length of the volume body (`volumeUrl`). */
  byteLength: number;
  volumeUrl: string;
  deidentification: DeidentificationRecord;
  /**
   * How the pixels came: the transfer syntax of the files and, when that syntax (or Lossy
   * Image Compression (0028,2110) = 01 in the files) says the pixels went through a lossy
   * compression, its ratio and method as far as known. null for series stored before this
   * was recorded.
   */
  compression: SeriesCompression | null;
  uploadedBy: { id: string; displayName: string };
  createdAt: string;
}

/** The compression the pixels of a series went through before they reached Emberline. */
export interface SeriesCompression {
  /** Transfer Syntax UID (0002,0010) of the files, e.g. 1.2.840.10008.1.2.4.90. */
  transferSyntaxUid: string;
  /** Its name (DICOM PS3.6 Table A-1). */
  transferSyntaxName: string;
  /** True when any step of the pixels' history was lossy. */
  isLossy: boolean;
  /** Lossy Image Compression Ratio (0028,2112), else uncompressed over compressed bytes (10 for 10:1); null if not lossy. */
  lossyRatio: number | null;
  /** Lossy Image Compression Method (0028,2114), e.g. ISO_15444_1; null if not lossy or unknown. */
  lossyMethod: string | null;
}

/** The note a lossy series carries wherever it is shown. */
export const lossyCompressionNote = 'Lossy compressed: measurements may be less exact.';

/** How a series' slices lie, from its slice normal (the nearest patient axis within 10°). */
export const seriesOrientationNames = ['axial', 'coronal', 'sagittal', 'oblique'] as const;
export type SeriesOrientationName = (typeof seriesOrientationNames)[number];

/**
 * One image series found in an upload that holds several (`POST /api/cases/:id/series` answered
 * 202): what the presenter sees to choose which to keep. Nothing of it is stored until kept.
 */
export interface UploadSeriesCandidate {
  /** Names the series within this upload (for `keep`); not a DICOM UID. */
  key: string;
  /** Series Description (0008,103E), or "CT series 4" when there is none. */
  description: string;
  modality: ImageModality;
  seriesNumber: number | null;
  sliceCount: number;
  /** Slice Thickness (0018,0050), or the spacing between slices when it is missing. */
  sliceThicknessMm: number | null;
  orientation: SeriesOrientationName;
  /** "arterial", "portal venous", "delayed", "non-contrast", "contrast", or null when unknown. */
  phaseHint: string | null;
  /** [columns, rows]. */
  matrix: [number, number];
  /** Transfer syntax name; `isLossy` when its pixels went through a lossy compression. */
  transferSyntaxName: string;
  isLossy: boolean;
}

/** An object of an upload that is not offered as a series, and why. */
export interface UploadSkippedObject {
  /** What it is: "Dose report", "Localizer (CT)", "Series 5: portal venous"… */
  description: string;
  reason: string;
}

/** The 202 answer of an upload that holds several series: choose with `POST /api/uploads/:id/keep`. */
export interface UploadListing {
  uploadId: string;
  /** When the server forgets the upload (ISO 8601); keeping after that answers 404. */
  expiresAt: string;
  series: UploadSeriesCandidate[];
  skipped: UploadSkippedObject[];
}

/** `POST /api/uploads/:id/keep`: the keys of the series to store (at least one). */
export interface KeepUploadRequest {
  keys: string[];
}

/**
 * Progress of an upload or a keep, `GET /api/upload-progress/:token`, where the token is the
 * UUID the client sent as `?progress=` with its POST. Stages: the server reads the files
 * (headers, sorted into series), then decodes the pixels of each series it stores, then
 * writes them.
 */
export interface UploadProgress {
  stage: 'reading' | 'decoding' | 'storing' | 'done' | 'failed';
  /** Files read so far of all files in the upload. */
  files: { done: number; total: number };
  /** Per series being decoded: slices done of slices in all. */
  series: { key: string; description: string; done: number; total: number }[];
}

/** The voxel grid of a series in patient space (DICOM PS3.3 C.7.6.2.1.1, LPS millimetres). */
export function seriesVolumeGeometry(
  series: Pick<ImageSeriesView, 'dimensions' | 'spacingMm' | 'originLps' | 'orientation'>,
): VolumeGeometry {
  return {
    dimensions: series.dimensions,
    spacingMm: series.spacingMm,
    originLps: series.originLps,
    direction: [
      series.orientation.rowLps,
      series.orientation.columnLps,
      series.orientation.sliceNormalLps,
    ],
  };
}

const finite = z.number().refine(Number.isFinite, 'a finite number');
const vec3Schema = z.tuple([finite, finite, finite]);
const count = z.number().int().positive();

/** The JSON header of a volume body. */
export const volumeFileHeaderSchema = z.object({
  format: z.literal('emberline-volume'),
  version: z.literal(1),
  dataType: z.literal('int16'),
  byteOrder: z.literal('little-endian'),
  /** [columns, rows, slices]. */
  dimensions: z.tuple([count, count, count]),
  /** [Δi, Δj, Δk], millimetres. */
  spacingMm: z.tuple([finite, finite, finite]).refine((s) => s.every((v) => v > 0), 'positive'),
  /** Centre of voxel (0, 0, 0), LPS, millimetres. */
  originLps: vec3Schema,
  /** Unit vectors along i, j and k, LPS. */
  direction: z.tuple([vec3Schema, vec3Schema, vec3Schema]),
  modality: z.enum(imageModalities),
  valueUnit: z.enum(volumeValueUnits),
  valueRange: z.object({ min: z.number().int(), max: z.number().int() }),
  window: z.object({ centre: finite, width: finite.refine((w) => w > 0, 'positive') }),
});
export type VolumeFileHeader = z.infer<typeof volumeFileHeaderSchema>;

export const volumeFileMagic = 'EMBERVOL';
/** A header longer than this is refused when decoding (a real one is well under 1 kB). */
const maxHeaderBytes = 65_536;

/** Thrown by `decodeVolumeFile` for bytes that are not a complete volume body. */
export class VolumeFileError extends Error {
  override readonly name = 'VolumeFileError';
}

/** Everything before the voxels: magic, header length and the padded ASCII JSON header. */
export function encodeVolumeFilePreamble(header: VolumeFileHeader): Uint8Array {
  return encodeStoredFilePreamble(volumeFileMagic, volumeFileHeaderSchema.parse(header));
}

function isLittleEndianPlatform(): boolean {
  return new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;
}

/**
 * Reads a volume body (see the top of this file): the header, checked, and the voxels as an
 * Int16Array of nx·ny·nz values, i fastest. Throws a VolumeFileError for anything else.
 */
export function decodeVolumeFile(body: ArrayBuffer | Uint8Array): {
  header: VolumeFileHeader;
  voxels: Int16Array;
} {
  const bytes = body instanceof Uint8Array ? body : new Uint8Array(body);
  const preamble = decodeStoredFilePreamble(bytes, {
    magic: volumeFileMagic,
    what: 'The volume',
    maxHeaderBytes,
    refuse: (message) => new VolumeFileError(message),
  });
  const result = volumeFileHeaderSchema.safeParse(preamble.header);
  if (!result.success) throw new VolumeFileError('The volume header is not a volume header.');
  const header = result.data;
  const voxelCount = header.dimensions[0] * header.dimensions[1] * header.dimensions[2];
  const { voxelOffset } = preamble;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (bytes.length - voxelOffset !== voxelCount * 2) {
    throw new VolumeFileError(
      `The volume holds ${bytes.length - voxelOffset} voxel bytes; its dimensions need ` +
        `${voxelCount * 2}.`,
    );
  }
  const start = bytes.byteOffset + voxelOffset;
  if (isLittleEndianPlatform() && start % 2 === 0) {
    return { header, voxels: new Int16Array(bytes.buffer, start, voxelCount) };
  }
  const voxels = new Int16Array(voxelCount);
  for (let index = 0; index < voxelCount; index++) {
    voxels[index] = view.getInt16(voxelOffset + 2 * index, true);
  }
  return { header, voxels };
}

/** Prefix of the problem-details `type` of every refused upload; the rest names the reason. */
export const imagingProblemTypePrefix = 'urn:emberline:problem:imaging:';

/**
 * GET /api/series/:id/removal — what goes with a series if it is removed, and whether it may be.
 * A series an assessment ran on stays (`blockedBy` names the plans and their assessments):
 * the assessment's result rests on it.
 */
export interface SeriesRemovalView {
  seriesId: string;
  /** Modality, series number and slice count, as the imaging section names the series. */
  seriesLabel: string;
  /** Its structures (they go with it), with the lesion each tumour is linked to, if any. */
  structures: {
    id: string;
    name: string;
    lesionLabel: string | null;
    isLesionConfirmed: boolean;
  }[];
  /** Whether it has a label map (goes with it). */
  hasLabelMap: boolean;
  /** Plans drafted on it (they go with it while no assessment ran on them). */
  plans: { id: string; name: string }[];
  /** Annotations drawn on it (they go with it). */
  annotationCount: number;
  /** Key images kept from it (they go with it, pictures included). */
  keyImageCount: number;
  /** Plans on it with assessments: while any is listed, the series cannot be removed. */
  blockedBy: { planId: string; planName: string; assessmentCount: number }[];
}

/** The imaging section's name of a series: modality, series number, slice count. */
export function seriesLabel(series: {
  modality: string;
  seriesNumber: number | null;
  sliceCount: number;
}): string {
  const number = series.seriesNumber === null ? '' : ` series ${series.seriesNumber}`;
  return `${series.modality}${number}, ${series.sliceCount} slices`;
}
