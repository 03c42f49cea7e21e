/**
 * Structures API: the labelled structures of an image series and the wire format of its
 * stored label map.
 *
 * A label map travels as one binary body, `application/octet-stream`, laid out as
 *   bytes 0–7     the ASCII magic `EMBERLBL`
 *   bytes 8–11    the byte length H of the header that follows, uint32 little-endian
 *   bytes 12…     the header: ASCII JSON (`LabelMapFileHeader`), padded with spaces so that the
 *                 voxels start on a multiple of 8 bytes
 *   then          the voxels: uint8 or uint16 little-endian label values, 0 background,
 *                 i (column) fastest, then j (row), then k (slice) — on the series' own grid.
 */
import { z } from 'zod';
import { decodeStoredFilePreamble, encodeStoredFilePreamble } from './stored-file-preamble';

/**
 * The kinds a label may stand for, by the identifiers used in the API, the code and the files
 * (DEVELOPERS.md, "Structure kinds").
 */
export const structureKinds = [
  'tumour',
  'liver',
  'portal-vein',
  'hepatic-vein',
  'hepatic-artery',
  'bile-duct',
  'gallbladder',
  'bowel',
  'stomach',
  'lung',
  'heart',
  'kidney',
  'bone',
  'skin',
] as const;
export type StructureKind = (typeof structureKinds)[number];

/** What each kind is called on screen. */
export const structureKindLabels: Record<StructureKind, string> = {
  tumour: 'Tumour',
  liver: 'Liver',
  'portal-vein': 'Portal vein',
  'hepatic-vein': 'Hepatic vein',
  'hepatic-artery': 'Hepatic artery',
  'bile-duct': 'Bile duct',
  gallbladder: 'Gallbladder',
  bowel: 'Bowel',
  stomach: 'Stomach',
  lung: 'Lung',
  heart: 'Heart',
  kidney: 'Kidney',
  bone: 'Rib or bone',
  skin: 'Skin',
};

export const structureSources = ['nifti', 'dicom-seg'] as const;
export type StructureSource = (typeof structureSources)[number];

/** One labelled structure of a series. */
export interface StructureView {
  id: string;
  seriesId: string;
  /** The voxel value that marks the structure in the label map (1…65535). */
  labelValue: number;
  /** Null until someone says what the label stands for. */
  kind: StructureKind | null;
  name: string;
  voxelCount: number;
  /** voxelCount × the volume of one voxel of the series, millilitres. */
  volumeMl: number;
  source: StructureSource;
  /**
   * The lesion of the case's Summary this tumour shows: suggested on import and when the
   * lesions change (by size, then position; a suggestion only), or chosen by the presenter.
   * Null when none; always null for a structure that is not a tumour.
   */
  lesionId: string | null;
  /** The linked lesion as the board names it ("segment VIII, 24 mm"), or null. */
  lesionLabel: string | null;
  /**
   * True once the presenter confirmed the link (with `lesionId` null: confirmed as showing no
   * lesion of the Summary). Only a confirmed link names the tumour in assessments; a suggestion
   * never replaces a confirmed link.
   */
  isLesionConfirmed: boolean;
}

/**
 * Two segments of a DICOM SEG claimed the same voxels: the voxels went to the segment whose
 * kind comes first (tumour, then vessels and ducts, then other organs, then the liver, the
 * skin last; the smaller segment between two of the same rank).
 */
export interface SegmentOverlap {
  keptSegment: number;
  keptName: string;
  keptKind: StructureKind;
  lostSegment: number;
  lostName: string;
  lostKind: StructureKind;
  voxelCount: number;
  /** In words, e.g. "Segment “Tumour 1” overlapped “Liver” in 3,412 voxels; the tumour kept them." */
  message: string;
}

/** 201 of POST /api/series/:id/structures. */
export interface StructureImportResult {
  /** All of the series' structures, by label value. */
  structures: StructureView[];
  /** Overlaps resolved by kind (DICOM SEG only; empty for NIfTI, which holds one label a voxel). */
  overlaps: SegmentOverlap[];
}

/** Largest label value a label map may hold (stored as uint16). */
export const maxLabelValue = 65_535;

/**
 * The optional `labels` field of an import: label value (decimal, 1…65535) → structure kind,
 * e.g. `{"1":"liver","2":"tumour"}`.
 */
export const structureLabelsSchema = z.record(
  z
    .string()
    .regex(/^[1-9]\d{0,4}$/, 'a label value from 1 to 65535')
    .refine((key) => Number(key) <= maxLabelValue, 'a label value from 1 to 65535'),
  z.enum(structureKinds),
);
export type StructureLabels = z.infer<typeof structureLabelsSchema>;

/**
 * PATCH /api/structures/:id: any of the kind, the name and the lesion link. A link is set by
 * confirming it — `{ lesionId, isLesionConfirmed: true }`, `lesionId` the suggested lesion,
 * another lesion of the case, or null for "shows none of the Summary's lesions" — and released
 * back to the suggestion with `{ isLesionConfirmed: false }`.
 */
export const updateStructureSchema = z
  .strictObject({
    kind: z.enum(structureKinds).nullable().optional(),
    name: z.string().trim().min(1).max(80).optional(),
    lesionId: z.uuid('lesionId must be a lesion id (a uuid) or null').nullable().optional(),
    isLesionConfirmed: z.boolean().optional(),
  })
  .superRefine((body, context) => {
    if (Object.values(body).every((value) => value === undefined)) {
      context.addIssue({
        code: 'custom',
        message: 'Send at least one of kind, name, lesionId and isLesionConfirmed.',
      });
    }
    if (body.lesionId !== undefined && body.isLesionConfirmed !== true) {
      context.addIssue({
        code: 'custom',
        path: ['isLesionConfirmed'],
        message:
          'A lesion chosen for a tumour is a confirmed link: send isLesionConfirmed: true with lesionId.',
      });
    }
    if (body.isLesionConfirmed === true && body.lesionId === undefined) {
      context.addIssue({
        code: 'custom',
        path: ['lesionId'],
        message:
          'Confirming a link names its lesion: send lesionId (the suggested one, another, or null for none).',
      });
    }
  });
export type UpdateStructure = z.infer<typeof updateStructureSchema>;

/** Prefix of the problem-details `type` of every refused import; the rest names the reason. */
export const structuresProblemTypePrefix = 'urn:emberline:problem:structures:';

const finite = z.number().refine(Number.isFinite, 'a finite number');
const vec3Schema = z.tuple([finite, finite, finite]);
const count = z.number().int().positive();

/** The JSON header of a label map body. */
export const labelMapFileHeaderSchema = z.object({
  format: z.literal('emberline-label-map'),
  version: z.literal(1),
  dataType: z.enum(['uint8', 'uint16']),
  byteOrder: z.literal('little-endian'),
  /** [columns, rows, slices]: those of the series. */
  dimensions: z.tuple([count, count, count]),
  /** [Δi, Δj, Δk], millimetres (the series'). */
  spacingMm: z.tuple([finite, finite, finite]),
  /** Centre of voxel (0, 0, 0), LPS, millimetres (the series'). */
  originLps: vec3Schema,
  /** Unit vectors along i, j and k, LPS (the series'). */
  direction: z.tuple([vec3Schema, vec3Schema, vec3Schema]),
  /** The label values present, ascending. */
  labelValues: z.array(z.number().int().min(1).max(maxLabelValue)),
});
export type LabelMapFileHeader = z.infer<typeof labelMapFileHeaderSchema>;

export const labelMapFileMagic = 'EMBERLBL';
const maxHeaderBytes = 1_048_576;

/** Thrown by `decodeLabelMapFile` for bytes that are not a complete label map body. */
export class LabelMapFileError extends Error {
  override readonly name = 'LabelMapFileError';
}

/** Everything before the voxels: magic, header length and the padded ASCII JSON header. */
export function encodeLabelMapFilePreamble(header: LabelMapFileHeader): Uint8Array {
  return encodeStoredFilePreamble(labelMapFileMagic, labelMapFileHeaderSchema.parse(header));
}

/**
 * Reads a label map body (see the top of this file): the header, checked, and the label values
 * (nx·ny·nz of them, i fastest). Throws a LabelMapFileError for anything else.
 */
export function decodeLabelMapFile(body: ArrayBuffer | Uint8Array): {
  header: LabelMapFileHeader;
  labels: Uint8Array | Uint16Array;
} {
  const bytes = body instanceof Uint8Array ? body : new Uint8Array(body);
  const preamble = decodeStoredFilePreamble(bytes, {
    magic: labelMapFileMagic,
    what: 'The label map',
    maxHeaderBytes,
    refuse: (message) => new LabelMapFileError(message),
  });
  const result = labelMapFileHeaderSchema.safeParse(preamble.header);
  if (!result.success) throw new LabelMapFileError('The label map header is not one.');
  const header = result.data;
  const voxelCount = header.dimensions[0] * header.dimensions[1] * header.dimensions[2];
  const bytesPerVoxel = header.dataType === 'uint8' ? 1 : 2;
  const { voxelOffset } = preamble;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (bytes.length - voxelOffset !== voxelCount * bytesPerVoxel) {
    throw new LabelMapFileError(
      `The label map holds ${bytes.length - voxelOffset} voxel bytes; its dimensions need ` +
        `${voxelCount * bytesPerVoxel}.`,
    );
  }
  if (header.dataType === 'uint8') {
    return { header, labels: bytes.slice(voxelOffset) };
  }
  const labels = new Uint16Array(voxelCount);
  for (let index = 0; index < voxelCount; index++) {
    labels[index] = view.getUint16(voxelOffset + 2 * index, true);
  }
  return { header, labels };
}
