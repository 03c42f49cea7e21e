/**
 * A worker thread that reads uploads. A `scan` job unpacks the upload (files, a zip, a folder
 * with a DICOMDIR) and reads every file's header; a `decode` job decodes the pixels of chosen
 * files, answering each file as soon as it is done so that the worker never holds a whole
 * series. Before each file (and every few frames of a multi-frame file) it reports progress,
 * which restarts the pool's clock for that file. The pool bounds its time and memory, since
 * dicom-parser recurses into sequences without a depth limit and codecs run on untrusted
 * bytes; nothing here logs or writes anything.
 */
import { parentPort } from 'node:worker_threads';
import { decodeInstance, InstanceRefusal, scanInstance } from './dicom-instance-reader';
import type { ReadRequest, ScannedEntry, WorkerMessage } from './dicom-read-protocol';
import { initialiseCodecs, releaseCodecMemory } from './pixel-data';
import { unpackUpload } from './upload-unpack';

const codecsReady = initialiseCodecs();
void codecsReady.then(() => parentPort?.postMessage({ jobId: 0, type: 'ready' }));

function post(message: WorkerMessage, transfer: ArrayBuffer[] = []): void {
  parentPort?.postMessage(message, transfer);
}

function refusalOf(error: unknown, label: string): WorkerMessage & { type: 'refused' } {
  if (error instanceof InstanceRefusal) {
    return { jobId: 0, type: 'refused', refusal: error.payload };
  }
  const isTooDeep = error instanceof RangeError && /call stack/i.test(error.message);
  return {
    jobId: 0,
    type: 'refused',
    refusal: {
      status: 400,
      reason: isTooDeep ? 'too-complex' : 'malformed',
      detail: isTooDeep
        ? `${label} nests its attributes too deeply to be read.`
        : `${label} could not be read as a DICOM image.`,
    },
  };
}

function scan(request: Extract<ReadRequest, { kind: 'scan' }>): void {
  const { jobId, limits } = request;
  let label = 'The upload';
  try {
    const unpacked = unpackUpload(
      request.files.map((file) => ({ name: file.name, bytes: new Uint8Array(file.buffer) })),
      limits,
    );
    const entries: ScannedEntry[] = [];
    unpacked.entries.forEach((entry, index) => {
      label = entry.label;
      post({
        jobId,
        type: 'progress',
        label,
        fileIndex: index,
        framesDone: 0,
        fileCount: unpacked.entries.length,
      });
      entries.push({
        label: entry.label,
        path: entry.path,
        bytes: entry.bytes,
        scanned: scanInstance(entry.bytes, entry.label, limits),
      });
    });
    const transfer = uniqueBuffers(entries.map((entry) => entry.bytes));
    post(
      {
        jobId,
        type: 'scanned',
        entries,
        skippedCount: unpacked.skippedCount,
        skipped: unpacked.skipped,
        directory: unpacked.directory,
      },
      transfer,
    );
  } catch (error) {
    post({ ...refusalOf(error, label), jobId });
  }
}

function decode(request: Extract<ReadRequest, { kind: 'decode' }>): void {
  const { jobId, limits } = request;
  let label = 'The upload';
  try {
    request.files.forEach((file, index) => {
      label = file.label;
      post({ jobId, type: 'progress', label, fileIndex: index, framesDone: 0 });
      const { scanned, decoded } = decodeInstance(
        new Uint8Array(file.buffer),
        file.label,
        limits,
        (done, total) => {
          // A long multi-frame file reports every 16 frames, so its clock runs per run.
          if (done % 16 === 0 && done < total) {
            post({
              jobId,
              type: 'progress',
              label: file.label,
              fileIndex: index,
              framesDone: done,
            });
          }
        },
      );
      post(
        { jobId, type: 'decoded', index, scanned, decoded },
        decoded.frames.map((frame) => frame.buffer),
      );
      releaseCodecMemory(limits.maxCodecMemoryBytes);
    });
    post({ jobId, type: 'done' });
  } catch (error) {
    // A refused file may have grown a codec's memory as much as a good one.
    releaseCodecMemory(limits.maxCodecMemoryBytes);
    post({ ...refusalOf(error, label), jobId });
  }
}

/** The distinct whole buffers behind some views, for transfer (a zip's entries may share). */
function uniqueBuffers(views: Uint8Array[]): ArrayBuffer[] {
  const buffers = new Set<ArrayBuffer>();
  for (const view of views) {
    if (view.buffer instanceof ArrayBuffer) buffers.add(view.buffer);
  }
  return [...buffers];
}

parentPort?.on('message', (request: ReadRequest) => {
  void codecsReady.then(
    () => (request.kind === 'scan' ? scan(request) : decode(request)),
    (error: unknown) => {
      // Not the upload's fault: the worker ends and the pool reports an internal error.
      throw error;
    },
  );
});
