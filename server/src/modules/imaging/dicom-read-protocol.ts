/** Messages between the server and its DICOM reading workers (`dicom-read-pool.ts`). */
import type { InstanceReadLimits, ParsedInstance } from './dicom-instance-reader';
import type { RefusalPayload } from './imaging-refusal';
import type { UnpackLimits } from './upload-unpack';

export type ReadLimits = InstanceReadLimits & UnpackLimits;

export interface ReadRequest {
  jobId: number;
  /** The uploaded files, transferred (not copied) to the worker. */
  files: ArrayBuffer[];
  limits: ReadLimits;
}

export interface ReadResult {
  instances: ParsedInstance[];
  /** Zip entries left aside as not images (DICOMDIR, hidden files, archiver metadata). */
  skippedCount: number;
}

export type ReadReply =
  | ({ jobId: number; ok: true } & ReadResult)
  | { jobId: number; ok: false; refusal: RefusalPayload };
