/** Messages between the server and its DICOM SEG reading worker (`dicom-seg-reader.ts`). */
import type { SegmentOverlap, VolumeGeometry } from '@emberline/shared';
import type { DicomSegment } from './dicom-seg-label-map';
import type { SegmentKindHints } from './segment-overlap';
import type { StructureRefusalReason } from './structure-refusal';

export interface SegReadRequest {
  /** The uploaded file, transferred (not copied) to the worker. */
  file: ArrayBuffer;
  series: VolumeGeometry;
  /** What decides the kinds that resolve overlapping segments. */
  kindHints: SegmentKindHints;
}

export type SegReadReply =
  | {
      ok: true;
      labels: Uint16Array<ArrayBuffer>;
      segments: DicomSegment[];
      overlaps: SegmentOverlap[];
    }
  | { ok: false; refusal: { status: number; reason: StructureRefusalReason; detail: string } }
  /** Not the file's fault as far as anyone can tell; nothing of the error crosses over. */
  | { ok: false; refusal: null };
