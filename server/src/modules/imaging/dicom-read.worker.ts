/**
 * A worker thread that reads uploads: unpacks them, parses each file with dicom-parser and
 * answers the headers and pixels, or the refusal of the first file it cannot accept. The pool
 * that starts it bounds its time and memory, since dicom-parser recurses into sequences
 * without a depth limit; nothing here logs or writes anything.
 */
import { parentPort } from 'node:worker_threads';
import { InstanceRefusal, readInstance, type ParsedInstance } from './dicom-instance-reader';
import type { ReadReply, ReadRequest } from './dicom-read-protocol';
import { unpackUpload } from './upload-unpack';

function read(request: ReadRequest): ReadReply {
  let label = 'The upload';
  try {
    const { entries, skippedCount } = unpackUpload(
      request.files.map((buffer) => new Uint8Array(buffer)),
      request.limits,
    );
    const instances: ParsedInstance[] = [];
    for (const entry of entries) {
      label = entry.label;
      instances.push(readInstance(entry.bytes, entry.label, request.limits));
      // Let the file's bytes go as soon as it has been read.
      entry.bytes = new Uint8Array(0);
    }
    return { jobId: request.jobId, ok: true, instances, skippedCount };
  } catch (error) {
    if (error instanceof InstanceRefusal) {
      return { jobId: request.jobId, ok: false, refusal: error.payload };
    }
    const isTooDeep = error instanceof RangeError && /call stack/i.test(error.message);
    return {
      jobId: request.jobId,
      ok: false,
      refusal: {
        status: 400,
        reason: isTooDeep ? 'too-complex' : 'malformed',
        detail: isTooDeep
          ? `${label} nests its attributes too deeply to be read.`
          : `${label} could not be read as a DICOM image.`,
      },
    };
  }
}

parentPort?.on('message', (request: ReadRequest) => {
  const reply = read(request);
  const transfer = reply.ok ? reply.instances.map((instance) => instance.pixels.buffer) : [];
  parentPort?.postMessage(reply, transfer);
});
