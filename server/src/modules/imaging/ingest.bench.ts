/**
 * Throughput of the ingest path on a CT-sized series, step by step: reading in the worker
 * (unpack and headers, sorting into series, decoding the pixels), stacking, de-identifying the header, writing the volume. Not a
 * test: run it and read the figures.
 *
 *   node --import tsx server/src/modules/imaging/ingest.bench.ts [slices] [size]
 *
 * The series is synthetic, written with dcmjs here: `size` × `size` 16-bit slices (default
 * 200 of 512 × 512), sent as files and as one .zip.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import dcmjs from 'dcmjs';
import { zipSync } from 'fflate';
import { deidentifyHeader } from './deidentify';
import { DicomReadPool } from './dicom-read-pool';
import { FileStore } from './file-store';
import { assembleSeries } from './series-assembly';
import { sortStudy } from './study-sorting';

const sliceCount = Number(process.argv[2] ?? 200);
const size = Number(process.argv[3] ?? 512);
const uid = (n: number) => `2.25.${1000 + n}`;

function slice(s: number): Uint8Array {
  const meta = dcmjs.data.DicomMetaDictionary.denaturalizeDataset({
    FileMetaInformationVersion: new Uint8Array([0, 1]).buffer,
    MediaStorageSOPClassUID: '1.2.840.10008.5.1.4.1.1.2',
    MediaStorageSOPInstanceUID: uid(10_000 + s),
    TransferSyntaxUID: '1.2.840.10008.1.2.1',
    ImplementationClassUID: uid(1),
  });
  const pixels = Uint16Array.from({ length: size * size }, (_, index) => (index + s) % 4096);
  const dict = new dcmjs.data.DicomDict(meta);
  dict.dict = {
    '00080016': { vr: 'UI', Value: ['1.2.840.10008.5.1.4.1.1.2'] },
    '00080018': { vr: 'UI', Value: [uid(10_000 + s)] },
    '00080060': { vr: 'CS', Value: ['CT'] },
    '00100010': { vr: 'PN', Value: [{ Alphabetic: 'Benchmark^Series' }] },
    '0020000D': { vr: 'UI', Value: [uid(2)] },
    '0020000E': { vr: 'UI', Value: [uid(3)] },
    '00200032': { vr: 'DS', Value: ['-200', '-200', String(1.25 * s)] },
    '00200037': { vr: 'DS', Value: ['1', '0', '0', '0', '1', '0'] },
    '00200052': { vr: 'UI', Value: [uid(4)] },
    '00280010': { vr: 'US', Value: [size] },
    '00280011': { vr: 'US', Value: [size] },
    '00280030': { vr: 'DS', Value: ['0.78', '0.78'] },
    '00280100': { vr: 'US', Value: [16] },
    '00280101': { vr: 'US', Value: [16] },
    '00280102': { vr: 'US', Value: [15] },
    '00280103': { vr: 'US', Value: [0] },
    '00281052': { vr: 'DS', Value: ['-1024'] },
    '00281053': { vr: 'DS', Value: ['1'] },
    '7FE00010': { vr: 'OW', Value: [pixels.buffer] },
  };
  return new Uint8Array(dict.write());
}

function milliseconds(since: number): string {
  return `${(performance.now() - since).toFixed(0)} ms`;
}

dcmjs.log.setLevel('error');
const files = Array.from({ length: sliceCount }, (_, s) => slice(s));
const megabytes = files.reduce((total, file) => total + file.length, 0) / 1_048_576;
const archive = zipSync(Object.fromEntries(files.map((file, s) => [`IM${s}`, file])));
const pool = new DicomReadPool({
  size: 1,
  timeoutMs: 120_000,
  memoryLimitMb: 256,
  maxQueued: 4,
  limits: {
    maxFiles: 4000,
    maxInstanceBytes: 16 * 1_048_576,
    maxDecodedBytes: 1024 * 1_048_576,
    maxInflatedBytes: 2048 * 1_048_576,
    maxSequenceDepth: 12,
    maxAttributes: 100_000,
    maxCodecMemoryBytes: 256 * 1_048_576,
  },
});
await pool.warm();
const storeDir = mkdtempSync(join(tmpdir(), 'emberline-ingest-bench-'));
try {
  process.stdout.write(`${sliceCount} slices of ${size} × ${size}, ${megabytes.toFixed(1)} MB\n`);
  for (const [name, upload] of [
    ['files', files],
    ['one .zip', [archive]],
  ] as const) {
    let started = performance.now();
    const scan = await pool.scan(
      upload.map((file, index) => ({ name: `IM${index}`, bytes: file.slice() })),
    );
    const scanned = milliseconds(started);
    started = performance.now();
    const [candidate] = sortStudy(scan.entries).candidates;
    const sorted = milliseconds(started);
    started = performance.now();
    const decoded = await pool.decode(
      candidate.entryIndices.map((index) => scan.entries[index]),
      { keepBytes: false },
    );
    const read = milliseconds(started);
    started = performance.now();
    const assembled = assembleSeries(candidate.plan, decoded);
    const stacked = milliseconds(started);
    started = performance.now();
    deidentifyHeader(assembled.firstSliceHeader, { replaceUid: () => uid(5), dateShiftDays: -400 });
    const cleaned = milliseconds(started);
    started = performance.now();
    const store = new FileStore(storeDir);
    await store.writeAtomically(store.newVolumeKey(), [
      new Uint8Array(
        assembled.voxels.buffer,
        assembled.voxels.byteOffset,
        assembled.voxels.byteLength,
      ),
    ]);
    const written = milliseconds(started);
    process.stdout.write(
      `${name}: scan ${scanned}, sort ${sorted}, decode ${read}, stack ${stacked}, ` +
        `de-identify ${cleaned}, write ${written}\n`,
    );
  }
} finally {
  await pool.close();
  rmSync(storeDir, { recursive: true, force: true });
}
