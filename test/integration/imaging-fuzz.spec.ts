import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { deflateRawSync } from 'node:zlib';
import dicomParser from 'dicom-parser';
import dcmjs from 'dcmjs';
import { createRequire } from 'node:module';
import { compressedDicomSet } from '../support/compressed-dicom';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { deidentifyHeader } from '../../server/src/modules/imaging/deidentify';
import { DicomReadPool } from '../../server/src/modules/imaging/dicom-read-pool';
import type { ReadLimits } from '../../server/src/modules/imaging/dicom-read-protocol';
import { ImagingRefusal } from '../../server/src/modules/imaging/imaging-refusal';
import { assembleSeries } from '../../server/src/modules/imaging/series-assembly';
import { sortStudy } from '../../server/src/modules/imaging/study-sorting';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo } from '../support/demo';
import {
  buildSeries,
  implicitLittleEndian,
  part10,
  seededRandom,
  seriesSpec,
  setEnvironment,
  uploadFiles,
} from './imaging-fixtures';

/**
 * Mutated and truncated variants of valid files, each read through the same worker path as an
 * upload (`DicomReadPool`), then stacked and de-identified as the service does: every one must
 * end in an accepted series or an ImagingRefusal with a 4xx, within the time bound.
 */
const limits: ReadLimits = {
  maxFiles: 40,
  maxInstanceBytes: 32 * 1_048_576,
  maxDecodedBytes: 1024 * 1_048_576,
  maxInflatedBytes: 64 * 1_048_576,
  maxSequenceDepth: 12,
  maxAttributes: 20_000,
  maxCodecMemoryBytes: 128 * 1_048_576,
};
const timeoutMs = 4000;
const memoryLimitMb = 64;
const variantCount = 2400;
const seed = 20261201;

let pool: DicomReadPool;

beforeAll(async () => {
  pool = new DicomReadPool({ size: 2, timeoutMs, memoryLimitMb, maxQueued: 64, limits });
  await pool.warm();
});

afterAll(async () => {
  await pool.close();
});

type Outcome =
  { kind: 'accepted' } | { kind: 'refused'; status: number; reason: string; detail: string };

/** Reads, stacks and de-identifies, as an upload would; anything but a refusal is a failure. */
async function ingest(files: Uint8Array[], through = pool): Promise<Outcome> {
  try {
    const scan = await through.scan(
      files.map((file, index) => ({ name: `IM${index + 1}`, bytes: file.slice() })),
    );
    const sorted = sortStudy(scan.entries);
    if (!sorted.candidates.length) throw ImagingRefusal.from(sorted.refusalIfEmpty);
    for (const candidate of sorted.candidates) {
      const decoded = await through.decode(
        candidate.entryIndices.map((index) => scan.entries[index]),
        { keepBytes: true },
      );
      const assembled = assembleSeries(candidate.plan, decoded);
      deidentifyHeader(assembled.firstSliceHeader, {
        replaceUid: () => '2.25.1',
        dateShiftDays: -400,
      });
    }
    return { kind: 'accepted' };
  } catch (error) {
    if (error instanceof ImagingRefusal) {
      return { kind: 'refused', status: error.status, reason: error.reason, detail: error.message };
    }
    throw error;
  }
}

function mutate(original: Uint8Array, random: () => number): Uint8Array {
  const at = (length: number) => Math.floor(random() * length);
  const bytes = original.slice();
  switch (at(7)) {
    case 0:
      return bytes.subarray(0, at(bytes.length));
    case 1: {
      for (let n = 1 + at(16); n > 0; n--) bytes[at(bytes.length)] = at(256);
      return bytes;
    }
    case 2: {
      // A length field's worth of bytes set to an extreme: 0xFFFFFFFF, 0, or random.
      const offset = 132 + at(bytes.length - 136);
      const value = [0xffffffff, 0, at(2 ** 32)][at(3)];
      new DataView(bytes.buffer).setUint32(offset, value, true);
      return bytes;
    }
    case 3: {
      const offset = at(bytes.length);
      const inserted = Uint8Array.from({ length: 1 + at(64) }, () => at(256));
      return Uint8Array.from([
        ...bytes.subarray(0, offset),
        ...inserted,
        ...bytes.subarray(offset),
      ]);
    }
    case 4: {
      const offset = at(bytes.length);
      return Uint8Array.from([
        ...bytes.subarray(0, offset),
        ...bytes.subarray(offset + 1 + at(256)),
      ]);
    }
    case 5: {
      // Dense damage to the header only (the first kilobyte after the preamble).
      for (let n = 1 + at(64); n > 0; n--)
        bytes[132 + at(Math.min(1024, bytes.length - 132))] = at(256);
      return bytes;
    }
    default: {
      const start = at(bytes.length);
      const span = bytes.subarray(start, start + 1 + at(512));
      const offset = at(bytes.length);
      return Uint8Array.from([...bytes.subarray(0, offset), ...span, ...bytes.subarray(offset)]);
    }
  }
}

interface J2kEncoder {
  getDecodedBuffer(frameInfo: object): Uint8Array;
  getEncodedBuffer(): Uint8Array;
  encode(): void;
  delete(): void;
}

/**
 * A file like `template` whose pixels are one `size` × `size` frame of noise, JPEG 2000
 * lossless (.90), encoded by the OpenJPEG WebAssembly build and wrapped by dcmjs.
 */
async function noisyJpeg2000(template: Uint8Array, size: number): Promise<Uint8Array> {
  const factory = createRequire(import.meta.url)(
    '@cornerstonejs/codec-openjpeg/wasmjs',
  ) as () => Promise<{
    J2KEncoder: new () => J2kEncoder;
  }>;
  const openJpeg = await factory();
  const encoder = new openJpeg.J2KEncoder();
  let codestream: Uint8Array;
  try {
    const input = encoder.getDecodedBuffer({
      width: size,
      height: size,
      bitsPerSample: 16,
      componentCount: 1,
      isSigned: false,
    });
    const random = seededRandom(7);
    for (let index = 0; index < input.length; index++) input[index] = Math.floor(random() * 256);
    encoder.encode();
    codestream = encoder.getEncodedBuffer().slice();
  } finally {
    encoder.delete();
  }
  const message = dcmjs.data.DicomMessage.readFile(
    template.buffer.slice(template.byteOffset, template.byteOffset + template.byteLength),
  );
  const natural = dcmjs.data.DicomMetaDictionary.naturalizeDataset(message.dict) as Record<
    string,
    unknown
  >;
  Object.assign(natural, {
    Rows: size,
    Columns: size,
    BitsStored: 16,
    HighBit: 15,
    PixelRepresentation: 0,
    RescaleIntercept: 0,
    PixelData: [codestream.buffer],
  });
  const meta = { ...message.meta, '00020010': { vr: 'UI', Value: ['1.2.840.10008.1.2.4.90'] } };
  const dict = new dcmjs.data.DicomDict(meta);
  dict.dict = dcmjs.data.DicomMetaDictionary.denaturalizeDataset(natural);
  return new Uint8Array(dict.write());
}

/** A valid file's meta, then `count` nested sequences of undefined length (explicit VR LE). */
function nestedSequences(valid: Uint8Array, count: number, isClosed: boolean): Uint8Array {
  const metaLength = new DataView(valid.buffer, valid.byteOffset).getUint32(140, true);
  const head = valid.subarray(0, 144 + metaLength);
  const open = [0x08, 0x00, 0x40, 0x11, 0x53, 0x51, 0, 0, 0xff, 0xff, 0xff, 0xff];
  const item = [0xfe, 0xff, 0x00, 0xe0, 0xff, 0xff, 0xff, 0xff];
  const itemEnd = [0xfe, 0xff, 0x0d, 0xe0, 0, 0, 0, 0];
  const sequenceEnd = [0xfe, 0xff, 0xdd, 0xe0, 0, 0, 0, 0];
  const body: number[] = [];
  for (let n = 0; n < count; n++) body.push(...open, ...item);
  if (isClosed) for (let n = 0; n < count; n++) body.push(...itemEnd, ...sequenceEnd);
  return Uint8Array.from([...head, ...body]);
}

/** A valid file's meta, then `count` distinct empty private attributes: a heap, not a header. */
function manyAttributes(valid: Uint8Array, count: number): Uint8Array {
  const metaLength = new DataView(valid.buffer, valid.byteOffset).getUint32(140, true);
  const head = valid.subarray(0, 144 + metaLength);
  const bytes = new Uint8Array(head.length + 8 * count);
  bytes.set(head);
  const view = new DataView(bytes.buffer);
  for (let n = 0; n < count; n++) {
    const at = head.length + 8 * n;
    view.setUint16(at, 0x1001 + 2 * Math.floor(n / 0xfff0), true);
    view.setUint16(at + 2, 0x0010 + (n % 0xfff0), true);
    bytes[at + 4] = 0x4c; // "LO"
    bytes[at + 5] = 0x4f;
    view.setUint16(at + 6, 0, true);
  }
  return bytes;
}

describe('fuzzing the reading path: mutated and truncated files', () => {
  const spec = seriesSpec({ isIdentifying: true });
  const files = buildSeries(spec);
  const implicitFiles = buildSeries({ ...spec, transferSyntaxUid: implicitLittleEndian });

  it('accepts the unmutated files (the fuzzing starts from a valid series)', async () => {
    expect(await ingest(files.slice(0, 3))).toEqual({ kind: 'accepted' });
    expect(await ingest(implicitFiles.slice(0, 3))).toEqual({ kind: 'accepted' });
  });

  it(`ends each of ${variantCount} variants (seed ${seed}) in a series or a 4xx, within the bound`, async () => {
    const random = seededRandom(seed);
    const outcomes = new Map<string, number>();
    let slowestMs = 0;
    const started = performance.now();
    for (let n = 0; n < variantCount; n += 2) {
      const batch = [n, n + 1].map((index) => {
        const base = index % 2 === 0 ? files : implicitFiles;
        const target = Math.floor(random() * 3);
        const variant = base.slice(0, 3);
        variant[target] = mutate(base[target], random);
        return variant;
      });
      const results = await Promise.all(
        batch.map(async (variant) => {
          const begin = performance.now();
          const outcome = await ingest(variant);
          slowestMs = Math.max(slowestMs, performance.now() - begin);
          return outcome;
        }),
      );
      for (const outcome of results) {
        if (outcome.kind === 'refused') {
          expect(outcome.status).toBeGreaterThanOrEqual(400);
          expect(outcome.status).toBeLessThan(500);
        }
        const key =
          outcome.kind === 'accepted' ? 'accepted' : `${outcome.status} ${outcome.reason}`;
        outcomes.set(key, (outcomes.get(key) ?? 0) + 1);
      }
    }
    const totalS = (performance.now() - started) / 1000;
    // The figures of the run, for the record (a benchmark of sorts, not a timed check).
    process.stdout.write(
      `fuzz: ${variantCount} variants in ${totalS.toFixed(1)} s, slowest ` +
        `${slowestMs.toFixed(0)} ms; ${JSON.stringify(Object.fromEntries([...outcomes].sort()))}\n`,
    );
    expect(slowestMs).toBeLessThan(timeoutMs + 2000);
    expect([...outcomes.values()].reduce((a, b) => a + b, 0)).toBe(variantCount);
    // The mutations do reach past the first checks: several kinds of refusal, and survivors.
    expect(outcomes.size).toBeGreaterThan(4);
  }, 120_000);

  it('refuses sequences nested 50 000 deep (dicom-parser recurses without a limit) with a 4xx', async () => {
    for (const isClosed of [false, true]) {
      const outcome = await ingest([nestedSequences(files[0], 50_000, isClosed), files[1]]);
      expect(outcome).toMatchObject({
        kind: 'refused',
        status: 400,
        reason: 'too-complex',
        detail: 'File 1 (IM1) nests its attributes too deeply to be read.',
      });
    }
  });

  it('refuses sequences nested deeper than the limit, well formed, as too complex', async () => {
    const outcome = await ingest([nestedSequences(files[0], 20, true), files[1]]);
    expect(outcome).toMatchObject({
      kind: 'refused',
      status: 400,
      reason: 'too-complex',
      detail:
        'File 1 (IM1) nests sequences deeper than 12 levels (at (0008,1140)); an image header never needs that.',
    });
  });

  it(`refuses a file whose parse outgrows ${memoryLimitMb} MB in the worker, and reads on`, async () => {
    const outcome = await ingest([manyAttributes(files[0], 2_000_000), files[1]]);
    expect(outcome).toMatchObject({
      kind: 'refused',
      status: 400,
      reason: 'too-complex',
      detail: expect.stringMatching(/needed more than 64 MB of memory/),
    });
    expect(await ingest(files.slice(0, 3))).toEqual({ kind: 'accepted' });
  }, 60_000);

  it('refuses an upload past the time bound, terminating the worker', async () => {
    const hurried = new DicomReadPool({
      size: 1,
      timeoutMs: 1,
      memoryLimitMb,
      maxQueued: 4,
      limits,
    });
    try {
      const outcome = await ingest(files, hurried);
      expect(outcome).toMatchObject({
        kind: 'refused',
        status: 400,
        detail: expect.stringMatching(/took longer than 0 s/),
      });
    } finally {
      await hurried.close();
    }
  });

  it('names the file that outlasts the per-file bound while decoding, and reads on', async () => {
    // A 2048 × 2048 frame of noise, JPEG 2000 lossless: a second or so to decode, against a
    // bound of 250 ms a file; the two files before it decode well within it.
    const slow = await noisyJpeg2000(files[2], 2048);
    const bounded = new DicomReadPool({
      size: 1,
      timeoutMs: 250,
      memoryLimitMb,
      maxQueued: 4,
      limits,
    });
    try {
      await bounded.warm();
      const scan = await bounded.scan([
        { name: 'IM1', bytes: files[0].slice() },
        { name: 'IM2', bytes: files[1].slice() },
        { name: 'IM3', bytes: slow },
      ]);
      await expect(bounded.decode(scan.entries, { keepBytes: false })).rejects.toMatchObject({
        status: 400,
        reason: 'too-complex',
        message: expect.stringMatching(/^File 3 \(IM3\) took longer than 0\.25 s to read/),
      });
      expect(await ingest(files.slice(0, 3), bounded)).toEqual({ kind: 'accepted' });
    } finally {
      await bounded.close();
    }
  });

  it('refuses a deflated data set that would inflate past the per-file limit, inflating no further', async () => {
    // 64 MB of zeros deflate to some 64 kB: a "deflate bomb" against the 32 MB a file may hold.
    const written = part10({}, { transferSyntaxUid: '1.2.840.10008.1.2.1.99' });
    // Whatever dcmjs wrote after the file meta is replaced by the bomb.
    const metaEnd = (dicomParser.readPart10Header(written) as unknown as { position: number })
      .position;
    const bomb = Uint8Array.from([
      ...written.subarray(0, metaEnd),
      ...deflateRawSync(new Uint8Array(64 * 1_048_576)),
    ]);
    expect(await ingest([bomb, files[1]])).toMatchObject({
      kind: 'refused',
      status: 413,
      reason: 'too-large',
      detail: expect.stringMatching(/^File 1.* inflates to more than 32\.0 MB/),
    });
  });
});

/**
 * The compressed syntaxes under damage: every single-frame reference file the codec tests build
 * with dcmtk and opj_compress (JPEG Lossless, JPEG-LS, JPEG 2000, RLE, big endian, deflated),
 * its Pixel Data truncated, bit-flipped, zeroed in runs or given extreme item lengths, then scanned and decoded in the workers as an upload is: each must decode or end in a
 * 4xx ImagingRefusal, within the time bound (0 crashes, 0 hangs).
 */
describe('fuzzing the decoders: damaged compressed pixel data', () => {
  const perFile = 24;

  function pixelDataOffset(bytes: Uint8Array): number {
    try {
      const element = dicomParser.parseDicom(bytes, { untilTag: 'x7fe00010' }).elements.x7fe00010;
      return element ? element.dataOffset : Math.floor(bytes.length / 2);
    } catch {
      return Math.floor(bytes.length / 2);
    }
  }

  function damage(original: Uint8Array, random: () => number): Uint8Array {
    const at = (length: number) => Math.floor(random() * length);
    const start = pixelDataOffset(original);
    const span = Math.max(1, original.length - start);
    const bytes = original.slice();
    switch (at(4)) {
      case 0:
        return bytes.subarray(0, start + at(span));
      case 1:
        for (let n = 1 + at(32); n > 0; n--) bytes[start + at(span)] ^= 1 << at(8);
        return bytes;
      case 2: {
        const from = start + at(span);
        bytes.fill(at(2) ? 0 : 0xff, from, Math.min(bytes.length, from + 1 + at(256)));
        return bytes;
      }
      default: {
        // An item or fragment length (or any four bytes there) set to an extreme.
        const offset = start + at(Math.max(1, span - 4));
        const value = [0xffffffff, 0, 0x7ffffffe, at(2 ** 32)][at(4)];
        if (offset + 4 <= bytes.length) new DataView(bytes.buffer).setUint32(offset, value, true);
        return bytes;
      }
    }
  }

  it(`decodes or refuses ${perFile} damaged variants of every compressed reference file`, async () => {
    const set = compressedDicomSet();
    // Single-frame files: the multi-frame ones are CT Image Storage with several frames, which an
    // upload sets aside before decoding (their splitting into frames is fuzzed in pixel-data/).
    const references = set.files.filter(
      (file) => file.variant === 'sample' && file.frames.length === 1,
    );
    const random = seededRandom(seed + 1);
    const outcomes = new Map<string, number>();
    let slowestMs = 0;
    let variants = 0;
    for (const reference of references) {
      const original = new Uint8Array(readFileSync(reference.path));
      for (let n = 0; n < perFile; n++) {
        const variant = damage(original, random);
        const begin = performance.now();
        let outcome: string;
        try {
          const scan = await pool.scan([{ name: 'IM1', bytes: variant }]);
          const images = scan.entries.filter((entry) => entry.scanned.kind === 'image');
          if (images.length) await pool.decode(images, { keepBytes: false });
          outcome = images.length
            ? 'decoded'
            : `skipped: ${scan.entries.map((entry) => (entry.scanned.kind === 'other' ? entry.scanned.what : '')).join()}`;
        } catch (error) {
          if (!(error instanceof ImagingRefusal)) throw error;
          expect(error.status, error.message).toBeGreaterThanOrEqual(400);
          expect(error.status, error.message).toBeLessThan(500);
          outcome = error.reason;
        }
        slowestMs = Math.max(slowestMs, performance.now() - begin);
        outcomes.set(outcome, (outcomes.get(outcome) ?? 0) + 1);
        variants += 1;
      }
    }
    process.stdout.write(
      `compressed fuzz: ${variants} variants of ${references.length} files, slowest ` +
        `${slowestMs.toFixed(0)} ms; ${JSON.stringify(Object.fromEntries([...outcomes].sort()))}\n`,
    );
    expect(variants).toBe(references.length * perFile);
    expect(slowestMs).toBeLessThan(timeoutMs + 2000);
    // The damage reaches the decoders: some variants are refused by them, some still decode.
    expect(outcomes.get('decoded') ?? 0).toBeGreaterThan(0);
    expect(outcomes.size).toBeGreaterThan(2);
  }, 300_000);
});

describe('the server under mutated uploads', () => {
  let testApp: TestApp;
  const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-imaging-fuzz-'));
  let restoreEnvironment: () => void = () => undefined;

  beforeAll(async () => {
    restoreEnvironment = setEnvironment({
      FILE_STORE_DIR: fileStoreDir,
      DEIDENTIFICATION_SECRET: 'imaging-fuzz-secret-9a8b7c6d5e4f3a2b1c0d',
    });
    testApp = await startTestApp();
  });

  afterAll(async () => {
    await testApp.close();
    restoreEnvironment();
    rmSync(fileStoreDir, { recursive: true, force: true });
  });

  it('answers 201 or a 4xx to each of 40 mutated uploads, and its health afterwards', async () => {
    const ids = await resetToDemo(testApp.orm);
    const presenter = new ApiClient(testApp.app);
    await presenter.signIn('presenter@emberline.test', demoPassword);
    const random = seededRandom(seed + 1);
    const statuses: number[] = [];
    for (let n = 0; n < 40; n++) {
      const files = buildSeries(seriesSpec());
      const target = Math.floor(random() * files.length);
      files[target] = mutate(files[target], random);
      const response = await uploadFiles(presenter, ids.northDraft, files);
      statuses.push(response.status);
      expect([201, 400, 409, 413, 415], JSON.stringify(response.body)).toContain(response.status);
      if (response.status === 201) {
        // A stored series: its id and at least the slices one upload can stack.
        expect(response.body).toMatchObject({ id: expect.any(String) });
        expect((response.body as { sliceCount: number }).sliceCount).toBeGreaterThan(1);
      } else {
        // A refusal says why, as problem details (RFC 9457).
        expect((response.body as { detail?: unknown }).detail).toEqual(expect.stringMatching(/\w/));
      }
    }
    expect(statuses.some((status) => status !== 201)).toBe(true);
    expect((await presenter.get('/api/health')).status).toBe(200);
    expect(testApp.logs).toEqual([]);
  }, 60_000);
});
