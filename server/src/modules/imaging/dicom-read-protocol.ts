/**
 * Messages between the server and its DICOM reading workers (`dicom-read-pool.ts`). A job
 * either scans an upload (unpacks it and reads every file's header) or decodes the pixels of
 * chosen files; the worker reports each file it starts, so that the pool can bound the time of
 * one file and name it when it takes too long.
 */
import type {
  DecodedInstance,
  InstanceReadLimits,
  ScannedImage,
  ScannedInstance,
} from './dicom-instance-reader';
import type { RefusalPayload } from './imaging-refusal';
import type { UnpackLimits, UnpackResult } from './upload-unpack';

export type ReadLimits = InstanceReadLimits &
  UnpackLimits & {
    /** WebAssembly memory a codec may keep between files before it is given back, bytes. */
    maxCodecMemoryBytes: number;
  };

/** One file of an upload as it reaches the worker. */
export interface UploadedFileMessage {
  name: string;
  buffer: ArrayBuffer;
}

/** One file of an upload once scanned: its bytes (handed back) and what it is. */
export interface ScannedEntry {
  label: string;
  path: string;
  bytes: Uint8Array;
  scanned: ScannedInstance;
}

export interface ScanResult {
  entries: ScannedEntry[];
  skippedCount: number;
  skipped: UnpackResult['skipped'];
  directory?: UnpackResult['directory'];
}

export interface DecodeFile {
  label: string;
  buffer: ArrayBuffer;
}

export type ReadRequest =
  | { jobId: number; kind: 'scan'; files: UploadedFileMessage[]; limits: ReadLimits }
  | { jobId: number; kind: 'decode'; files: DecodeFile[]; limits: ReadLimits };

export type WorkerMessage =
  /** The worker's codecs are compiled: sent once, before any job. */
  | { jobId: 0; type: 'ready' }
  /**
   * File `fileIndex` is being read, `framesDone` of its frames decoded so far (a multi-frame
   * file reports every few frames): restarts the clock of that file.
   */
  | {
      jobId: number;
      type: 'progress';
      label: string;
      fileIndex: number;
      framesDone: number;
      /** Scans: the files the upload holds once unpacked (a zip's entries, a DICOMDIR's images). */
      fileCount?: number;
    }
  | ({ jobId: number; type: 'scanned' } & ScanResult)
  | {
      jobId: number;
      type: 'decoded';
      index: number;
      scanned: ScannedImage;
      decoded: DecodedInstance;
    }
  | { jobId: number; type: 'done' }
  | { jobId: number; type: 'refused'; refusal: RefusalPayload };
