/**
 * Time to ingest a JPEG 2000 series end to end on the server side: the invented abdominal CT on
 * a clinical grid (512 × 512, 1 mm slices), each slice encoded lossless (.90) by the OpenJPEG
 * WebAssembly build's encoder and wrapped as encapsulated Pixel Data by dcmjs, then the path an
 * upload takes once received: scan in the worker, sort into series, decode in the worker,
 * stack, de-identify the header, write the volume. The transfer over the network is not in it.
 * Not a test: run it and read the figures.
 *
 *   node --import tsx server/src/modules/imaging/jpeg2000-ingest.bench.ts [slices...]
 *
 * Default: 300 and 500 slices. Also printed: the longest single file's decode (the per-file
 * bound is IMAGING_READ_TIMEOUT_MS, 30 s by default) and the bytes sent (the upload limit is
 * IMAGING_MAX_UPLOAD_BYTES, 512 MiB by default).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import dcmjs from 'dcmjs';
import { generateAbdomenCt } from '../../../../sample-data/generate-abdomen-ct';
import { CLINICAL_GRID } from '../../../../sample-data/abdomen/grid';
import { deidentifyHeader } from './deidentify';
import { DicomReadPool } from './dicom-read-pool';
import { FileStore } from './file-store';
import { assembleSeries } from './series-assembly';
import { sortStudy } from './study-sorting';

interface J2kEncoder {
  getDecodedBuffer(frameInfo: object): Uint8Array;
  getEncodedBuffer(): Uint8Array;
  encode(): void;
  delete(): void;
}

dcmjs.log.setLevel('error');
const { DicomMessage, DicomMetaDictionary, DicomDict } = dcmjs.data;
const require = createRequire(import.meta.url);
const openJpegFactory = require('@cornerstonejs/codec-openjpeg/wasmjs') as () => Promise<{
  J2KEncoder: new () => J2kEncoder;
}>;

const sliceCounts = process.argv
  .slice(2)
  .map(Number)
  .filter((n) => n > 1);
const counts = sliceCounts.length ? sliceCounts : [300, 500];
const mebibyte = 1_048_576;

function seconds(since: number): string {
  return `${((performance.now() - since) / 1000).toFixed(2)} s`;
}

const openJpeg = await openJpegFactory();

/** One slice re-encoded as JPEG 2000 lossless, in a Part 10 file of transfer syntax .90. */
function toJpeg2000(slice: ArrayBuffer): Uint8Array {
  const message = DicomMessage.readFile(slice);
  const natural = DicomMetaDictionary.naturalizeDataset(message.dict) as Record<string, unknown>;
  const encoder = new openJpeg.J2KEncoder();
  try {
    const pixels = new Uint8Array((natural.PixelData as ArrayBuffer[])[0]);
    const input = encoder.getDecodedBuffer({
      width: natural.Columns,
      height: natural.Rows,
      bitsPerSample: natural.BitsStored,
      componentCount: 1,
      isSigned: natural.PixelRepresentation === 1,
    });
    input.set(pixels);
    encoder.encode();
    const codestream = encoder.getEncodedBuffer().slice();
    natural.PixelData = [codestream.buffer];
  } finally {
    encoder.delete();
  }
  const meta = { ...message.meta, '00020010': { vr: 'UI', Value: ['1.2.840.10008.1.2.4.90'] } };
  const dict = new DicomDict(meta);
  dict.dict = DicomMetaDictionary.denaturalizeDataset(natural);
  return new Uint8Array(dict.write());
}

const pool = new DicomReadPool({
  size: 1,
  timeoutMs: 30_000,
  memoryLimitMb: 256,
  maxQueued: 4,
  limits: {
    maxFiles: 2000,
    maxInstanceBytes: 512 * mebibyte,
    maxDecodedBytes: 1024 * 1_048_576,
    maxInflatedBytes: 768 * mebibyte,
    maxSequenceDepth: 12,
    maxAttributes: 100_000,
    maxCodecMemoryBytes: 256 * mebibyte,
  },
});
await pool.warm();
const storeDir = mkdtempSync(join(tmpdir(), 'emberline-j2k-bench-'));
try {
  for (const count of counts) {
    let started = performance.now();
    const grid = {
      ...CLINICAL_GRID,
      slices: count,
      sliceSpacingMm: 1,
      originLps: [CLINICAL_GRID.originLps[0], CLINICAL_GRID.originLps[1], -count / 2] as [
        number,
        number,
        number,
      ],
    };
    const { slices } = generateAbdomenCt({ grid });
    const generated = seconds(started);
    started = performance.now();
    const files = slices.map(toJpeg2000);
    const encoded = seconds(started);
    const sentBytes = files.reduce((sum, file) => sum + file.length, 0);
    const rawBytes = count * 512 * 512 * 2;
    process.stdout.write(
      `${count} slices of 512 × 512: generated in ${generated}, encoded in ${encoded}; ` +
        `${(sentBytes / mebibyte).toFixed(1)} MB as JPEG 2000 (${(rawBytes / mebibyte).toFixed(0)} ` +
        `MB raw, ratio ${(rawBytes / sentBytes).toFixed(2)}:1)\n`,
    );
    const memoryBefore = process.memoryUsage().rss;
    const begin = performance.now();
    started = begin;
    const scan = await pool.scan(files.map((bytes, index) => ({ name: `IM${index}`, bytes })));
    const scanned = seconds(started);
    started = performance.now();
    const [candidate] = sortStudy(scan.entries).candidates;
    const sorted = seconds(started);
    started = performance.now();
    let longestFileMs = 0;
    let fileStarted = performance.now();
    const decoded = await pool.decode(
      candidate.entryIndices.map((index) => scan.entries[index]),
      {
        keepBytes: false,
        onProgress: () => {
          longestFileMs = Math.max(longestFileMs, performance.now() - fileStarted);
          fileStarted = performance.now();
        },
      },
    );
    const decodedIn = (performance.now() - started) / 1000;
    started = performance.now();
    const assembled = assembleSeries(candidate.plan, decoded);
    const stacked = seconds(started);
    started = performance.now();
    deidentifyHeader(assembled.firstSliceHeader, {
      replaceUid: () => '2.25.1',
      dateShiftDays: -400,
    });
    const store = new FileStore(storeDir);
    await store.writeAtomically(store.newVolumeKey(), [
      new Uint8Array(
        assembled.voxels.buffer,
        assembled.voxels.byteOffset,
        assembled.voxels.byteLength,
      ),
    ]);
    const written = seconds(started);
    const total = (performance.now() - begin) / 1000;
    process.stdout.write(
      `  scan ${scanned}, sort ${sorted}, decode ${decodedIn.toFixed(2)} s ` +
        `(${(count / decodedIn).toFixed(1)} slices/s, ${(rawBytes / mebibyte / decodedIn).toFixed(1)} MB/s), ` +
        `stack ${stacked}, de-identify and write ${written}\n` +
        `  end to end ${total.toFixed(2)} s; longest file ${longestFileMs.toFixed(0)} ms ` +
        `(bound 30 000 ms); server memory +${((process.memoryUsage().rss - memoryBefore) / mebibyte).toFixed(0)} MB\n`,
    );
  }
} finally {
  await pool.close();
  rmSync(storeDir, { recursive: true, force: true });
}
