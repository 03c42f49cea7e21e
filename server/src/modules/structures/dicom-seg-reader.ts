/**
 * Reads DICOM SEG files in worker threads (`dicom-seg-read.worker.ts`), one short-lived worker a
 * file, each bounded in time (terminated past `timeoutMs`) and in memory (`resourceLimits`): a
 * file that makes dicom-parser recurse, loop or swell ends in a refusal, never in a hang, a
 * crash of the server or a log line. SEG imports are rare, so no worker waits between them.
 */
import { Worker } from 'node:worker_threads';
import type { VolumeGeometry } from '@emberline/shared';
import type { DicomSegLabelMap } from './dicom-seg-label-map';
import type { SegReadReply, SegReadRequest } from './dicom-seg-read-protocol';
import { noKindHints, type SegmentKindHints } from './segment-overlap';
import { StructureRefusal } from './structure-refusal';

export interface DicomSegReadOptions {
  /** Longest one file may take, the worker's startup (~0.4 s under tsx) included. */
  timeoutMs: number;
  /** V8 heap of one worker (old generation), megabytes. */
  memoryLimitMb: number;
  /** Files read at once; one more is refused with 503. */
  maxConcurrent: number;
}

const isRunningFromSources = import.meta.url.endsWith('.ts');

function workerEntry(): URL {
  return isRunningFromSources
    ? new URL('./dicom-seg-read-worker-bootstrap.mjs', import.meta.url)
    : new URL('./dicom-seg-read.worker.js', import.meta.url);
}

/** An ArrayBuffer holding exactly the file, so that it can be transferred to the worker. */
function ownBuffer(file: Uint8Array): ArrayBuffer {
  const isWhole =
    file.byteOffset === 0 &&
    file.buffer instanceof ArrayBuffer &&
    file.byteLength === file.buffer.byteLength;
  return isWhole ? (file.buffer as ArrayBuffer) : file.slice().buffer;
}

export class DicomSegReader {
  private runningCount = 0;

  constructor(private readonly options: DicomSegReadOptions) {}

  /**
   * The label map of a SEG file on the series' grid; rejects with a StructureRefusal for a file
   * refused (503 while `maxConcurrent` others are read). The file's buffer is handed over.
   * `kindHints` decide, with the segments' descriptions, which of two overlapping segments
   * keeps a voxel.
   */
  async read(
    file: Uint8Array,
    series: VolumeGeometry,
    kindHints: SegmentKindHints = noKindHints,
  ): Promise<DicomSegLabelMap> {
    if (this.runningCount >= this.options.maxConcurrent) {
      throw new StructureRefusal(
        503,
        'busy',
        'Emberline is reading other segmentations; try again in a minute.',
      );
    }
    this.runningCount += 1;
    try {
      return await this.readInWorker(file, series, kindHints);
    } finally {
      this.runningCount -= 1;
    }
  }

  private readInWorker(
    file: Uint8Array,
    series: VolumeGeometry,
    kindHints: SegmentKindHints,
  ): Promise<DicomSegLabelMap> {
    const { timeoutMs, memoryLimitMb } = this.options;
    const worker = new Worker(workerEntry(), {
      resourceLimits: {
        maxOldGenerationSizeMb: memoryLimitMb,
        maxYoungGenerationSizeMb: Math.min(64, Math.max(8, memoryLimitMb / 8)),
        stackSizeMb: 4,
      },
      // Whatever a library might print stays out of the server's logs.
      stdout: true,
      stderr: true,
    });
    worker.stdout.resume();
    worker.stderr.resume();
    return new Promise<DicomSegLabelMap>((resolve, reject) => {
      let hasTimedOut = false;
      let crash: unknown;
      let isSettled = false;
      const timer = setTimeout(() => {
        hasTimedOut = true;
        void worker.terminate();
      }, timeoutMs);
      const settle = (outcome: () => void) => {
        if (isSettled) return;
        isSettled = true;
        clearTimeout(timer);
        outcome();
        void worker.terminate();
      };
      worker.once('message', (reply: SegReadReply) =>
        settle(() => {
          if (reply.ok) {
            resolve({ labels: reply.labels, segments: reply.segments, overlaps: reply.overlaps });
          } else if (reply.refusal) {
            const { status, reason, detail } = reply.refusal;
            reject(new StructureRefusal(status, reason, detail));
          } else reject(new Error('the DICOM SEG reading worker failed on the file'));
        }),
      );
      worker.once('error', (error) => {
        crash = error;
      });
      worker.once('exit', () =>
        settle(() => reject(this.refusalOfEndedWorker(hasTimedOut, crash))),
      );
      const buffer = ownBuffer(file);
      const request: SegReadRequest = { file: buffer, series, kindHints };
      try {
        worker.postMessage(request, [buffer]);
      } catch {
        // A buffer that cannot be transferred is copied instead.
        worker.postMessage(request);
      }
    });
  }

  private refusalOfEndedWorker(hasTimedOut: boolean, crash: unknown): Error {
    const seconds = Number((this.options.timeoutMs / 1000).toFixed(1));
    if (hasTimedOut) {
      return new StructureRefusal(
        400,
        'too-complex',
        `Reading the segmentation took longer than ${seconds} s; the file is damaged or far ` +
          'more complex than a label map needs.',
      );
    }
    const code = (crash as { code?: unknown } | undefined)?.code;
    if (code === 'ERR_WORKER_OUT_OF_MEMORY') {
      return new StructureRefusal(
        400,
        'too-complex',
        `Reading the segmentation needed more than ${this.options.memoryLimitMb} MB of memory; ` +
          'the file is damaged or far more complex than a label map needs.',
      );
    }
    // Not the file's fault as far as anyone can tell: an internal error, logged as such.
    return new Error(`the DICOM SEG reading worker stopped (${code ? String(code) : 'no code'})`);
  }
}
