/**
 * A worker thread that reads one DICOM SEG file into a label map on the series' grid
 * (`readDicomSegLabelMap`) and answers it, or the refusal. The reader that starts it bounds its
 * time and memory, since dicom-parser recurses into sequences without a depth limit. Nothing
 * here logs; what a library might print goes nowhere (the reader drains the worker's output).
 */
import { parentPort } from 'node:worker_threads';
import { readDicomSegLabelMap } from './dicom-seg-label-map';
import type { SegReadReply, SegReadRequest } from './dicom-seg-read-protocol';
import { StructureRefusal } from './structure-refusal';

function read(request: SegReadRequest): SegReadReply {
  try {
    const { labels, segments, overlaps } = readDicomSegLabelMap(
      new Uint8Array(request.file),
      request.series,
      request.kindHints,
    );
    return { ok: true, labels, segments, overlaps };
  } catch (error) {
    if (error instanceof StructureRefusal) {
      return {
        ok: false,
        refusal: { status: error.status, reason: error.reason, detail: error.message },
      };
    }
    if (error instanceof RangeError && /call stack/i.test(error.message)) {
      return {
        ok: false,
        refusal: {
          status: 400,
          reason: 'too-complex',
          detail: 'The DICOM file nests its attributes too deeply to be read.',
        },
      };
    }
    return { ok: false, refusal: null };
  }
}

parentPort?.once('message', (request: SegReadRequest) => {
  const reply = read(request);
  parentPort?.postMessage(reply, reply.ok ? [reply.labels.buffer] : []);
});
