/** Messages between the server and its DICOM SEG reading worker (`dicom-seg-reader.ts`). */
import type { VolumeGeometry } from '@emberline/shared';
import type { DicomSegment } from './dicom-seg-label-map';
import type { StructureRefusalReason } from './structure-refusal';

export interface SegReadRequest {
  /** The uploaded file, transferred (not copied) to the worker. */
  file: ArrayBuffer;
  series: VolumeGeometry;
}

export type SegReadReply =
  | { ok: true; labels: Uint16Array<ArrayBuffer>; segments: DicomSegment[] }
  | { ok: false; refusal: { status: number; reason: StructureRefusalReason; detail: string } }
  /** Not the file's fault as far as anyone can tell; nothing of the error crosses over. */
  | { ok: false; refusal: null };
