/**
 * Every frame of every reference file (test/support/compressed-dicom.ts: slices of the invented
 * CT compressed by Debian's dcmtk, the independent reference encoder, and by OpenJPEG's
 * opj_compress) decoded here and compared with the uncompressed original, stored value by
 * stored value.
 */
import { readFileSync } from 'node:fs';
import { inflateRawSync } from 'node:zlib';
import dicomParser, { type DataSet } from 'dicom-parser';
import { beforeAll, describe, expect, it } from 'vitest';
import {
  compressedDicomSet,
  jpegLsNear,
  originalValues,
  storedValues,
  uids,
  type ReferenceFile,
} from '../../../../../test/support/compressed-dicom';
import {
  decodeFrame,
  encapsulatedFrames,
  initialiseCodecs,
  transferSyntaxes,
  withExtendedOffsetTableReadable,
  type DecodedFrame,
  type FrameLayout,
} from './index';

const set = compressedDicomSet();

beforeAll(async () => {
  await initialiseCodecs();
});

function parse(file: ReferenceFile): DataSet {
  return dicomParser.parseDicom(withExtendedOffsetTableReadable(readFileSync(file.path)));
}

function layoutOf(dataSet: DataSet): FrameLayout {
  return {
    rows: dataSet.uint16('x00280010') ?? 0,
    columns: dataSet.uint16('x00280011') ?? 0,
    bitsAllocated: dataSet.uint16('x00280100') === 8 ? 8 : 16,
    bitsStored: dataSet.uint16('x00280101') ?? 0,
    isSigned: dataSet.uint16('x00280103') === 1,
    label: 'File 1',
  };
}

interface Decoded {
  frame: DecodedFrame;
  /** Stored values as the caller reads them, and the original's. */
  values: Int32Array;
  original: Int32Array;
}

function decodeAll(file: ReferenceFile): Decoded[] {
  const dataSet = parse(file);
  const syntax = transferSyntaxes.get(dataSet.string('x00020010') ?? '');
  if (!syntax) throw new Error(`${file.name}: no transfer syntax entry`);
  const layout = layoutOf(dataSet);
  const frameCount = Number(dataSet.string('x00280008') ?? '1');
  const frames = encapsulatedFrames(dataSet, dataSet.elements.x7fe00010, frameCount, 'File 1');
  expect(frames).toHaveLength(file.frames.length);
  return frames.map((bytes, index) => {
    const frame = decodeFrame(syntax, bytes, layout);
    return {
      frame,
      values: storedValues(frame.values, layout.bitsStored, layout.isSigned),
      original: originalValues(set.variants[file.variant].slices[file.frames[index]]),
    };
  });
}

function errors(values: Int32Array, reference: ArrayLike<number>) {
  expect(values.length).toBe(reference.length);
  let maxAbs = 0;
  let squares = 0;
  let firstMismatch = -1;
  for (let index = 0; index < values.length; index++) {
    const error = values[index] - reference[index];
    if (error !== 0 && firstMismatch < 0) firstMismatch = index;
    maxAbs = Math.max(maxAbs, Math.abs(error));
    squares += error * error;
  }
  return { maxAbs, rmse: Math.sqrt(squares / values.length), firstMismatch };
}

const byUid = (...wanted: string[]) =>
  set.files.filter((file) => wanted.includes(file.transferSyntaxUid));

describe('lossless syntaxes: voxel for voxel equal to the original (dcmtk and opj_compress as reference encoders)', () => {
  const lossless = byUid(
    uids.jpegLossless,
    uids.jpegLosslessSv1,
    uids.jpegLs,
    uids.rle,
    uids.j2kLossless,
  );

  it('covers every lossless codec, every variant and the multi-frame files', () => {
    const syntaxes = new Set(lossless.map((file) => file.transferSyntaxUid));
    expect(syntaxes.size).toBe(5);
    for (const variant of ['sample', 'signed', 'twelve-bit'] as const) {
      for (const uid of syntaxes) {
        expect(
          lossless.some((file) => file.variant === variant && file.transferSyntaxUid === uid),
        ).toBe(true);
      }
    }
    expect(lossless.filter((file) => file.frames.length > 1).length).toBeGreaterThanOrEqual(15);
  });

  it.each(lossless.map((file) => [file.name, file] as const))('%s', (_, file) => {
    for (const { frame, values, original } of decodeAll(file)) {
      const { maxAbs, firstMismatch } = errors(values, original);
      expect(firstMismatch, `first wrong pixel of ${file.name}`).toBe(-1);
      expect(maxAbs).toBe(0);
      // JPEG Lossless, JPEG-LS with NEAR 0 and RLE say they are lossless; a reversible
      // JPEG 2000 wavelet does not say whether every bit-plane was kept.
      expect(frame.isLossy).toBe(file.transferSyntaxUid === uids.j2kLossless ? null : false);
    }
  });
});

describe('JPEG-LS near-lossless: every error within NEAR', () => {
  const files = byUid(uids.jpegLsNear);

  it('has files to check (dcmcjpls codes near-lossless for unsigned pixels only)', () => {
    expect(files.length).toBeGreaterThanOrEqual(4);
    expect(files.every((file) => file.near === jpegLsNear)).toBe(true);
  });

  it.each(files.map((file) => [file.name, file] as const))('%s', (_, file) => {
    for (const { frame, values, original } of decodeAll(file)) {
      const { maxAbs } = errors(values, original);
      // ISO/IEC 14495-1 (T.87) 3.3 and A.2.1: NEAR bounds the absolute reconstruction error of
      // every sample (from memory). The coding must have been lossy somewhere (noise > NEAR).
      expect(maxAbs).toBeLessThanOrEqual(jpegLsNear);
      expect(maxAbs).toBeGreaterThan(0);
      expect(frame.isLossy).toBe(true);
    }
  });

  it('carries the Lossy Image Compression Method dcmtk writes, which the syntax table names', () => {
    const dataSet = parse(files[0]);
    expect(dataSet.string('x00282114')).toBe(transferSyntaxes.get(uids.jpegLsNear)?.lossyMethod);
    expect(dataSet.string('x00282110')).toBe('01');
  });
});

/**
 * Lossy JPEG 2000 at a compression ratio of 10 (opj_compress -r 10, of the raw Bits Stored):
 * the bounds were found by measuring these files when the test was written (OpenJPEG 2.5.0's
 * opj_compress, Debian), then given a margin of about a quarter. Measured worst cases: 16-bit
 * variants max 81, RMSE 13.7; 12-bit variant max 154, RMSE 20.0 (stored values, here HU).
 * The noise of the invented CT (σ = 10 HU) is what the coder drops first.
 */
const lossyBounds = {
  sixteenBits: { maxAbs: 100, rmse: 17 },
  twelveBits: { maxAbs: 190, rmse: 25 },
};

describe('lossy JPEG 2000: within the measured bounds, and as Debian opj_decompress decodes it', () => {
  const files = byUid(uids.j2k);

  it('has irreversible and reversible-wavelet files of every variant', () => {
    expect(files.filter((file) => file.isIrreversible).length).toBeGreaterThanOrEqual(12);
    expect(files.filter((file) => file.isIrreversible === false).length).toBeGreaterThanOrEqual(12);
  });

  it.each(files.map((file) => [file.name, file] as const))('%s', (_, file) => {
    const bounds =
      set.variants[file.variant].bitsStored === 12
        ? lossyBounds.twelveBits
        : lossyBounds.sixteenBits;
    const [{ frame, values, original }] = decodeAll(file);
    const fromOriginal = errors(values, original);
    expect(fromOriginal.maxAbs).toBeLessThanOrEqual(bounds.maxAbs);
    expect(fromOriginal.rmse).toBeLessThanOrEqual(bounds.rmse);
    expect(fromOriginal.maxAbs).toBeGreaterThan(0);
    // The irreversible 9-7 wavelet shows in the codestream; a reversible 5-3 one cut short by
    // the rate does not (the codestream does not record that bit-planes were dropped).
    expect(frame.isLossy).toBe(file.isIrreversible ? true : null);
    // The same codestream decoded by Debian's native opj_decompress: the WebAssembly build
    // must give the same image (the 9-7 wavelet is floating point, so builds may round
    // differently by 1; measured: identical).
    const variant = set.variants[file.variant];
    const native = storedValues(
      new Uint16Array(new Uint8Array(readFileSync(file.openJpegDecode ?? '')).buffer),
      variant.bitsStored,
      variant.isSigned,
    );
    expect(errors(values, native).maxAbs).toBeLessThanOrEqual(1);
  });
});

describe('native syntaxes of the table, against dcmconv files', () => {
  // The integrator reads these at parse level; here the table's byte order and deflate flag
  // are checked against what dcmconv wrote (+tb big endian, +td deflated).
  const files = byUid(uids.big, uids.deflated);

  it.each(files.map((file) => [file.name, file] as const))('%s', (_, file) => {
    const syntax = transferSyntaxes.get(file.transferSyntaxUid);
    expect(syntax?.kind).toBe('native');
    const raw = readFileSync(file.path);
    // PS3.10 7.1: the file meta (explicit VR little endian, never deflated) ends where its
    // group length (0002,0000) says; the data set follows, deflated (PS3.5 A.5) or not, its
    // first tag, group 0008, in the syntax's byte order.
    const meta = dicomParser.readPart10Header(raw);
    const metaEnd = 132 + 12 + (meta.uint32('x00020000') ?? 0);
    const dataSetBytes = syntax?.isDeflated
      ? inflateRawSync(raw.subarray(metaEnd))
      : raw.subarray(metaEnd);
    const group = syntax?.byteOrder === 'big' ? [0x00, 0x08] : [0x08, 0x00];
    expect([...dataSetBytes.subarray(0, 2)]).toEqual(group);

    const dataSet = dicomParser.parseDicom(raw);
    const element = dataSet.elements.x7fe00010;
    const view = new DataView(
      dataSet.byteArray.buffer,
      dataSet.byteArray.byteOffset + element.dataOffset,
      element.length,
    );
    const words = new Uint16Array(element.length / 2);
    const isLittle = syntax?.byteOrder === 'little';
    for (let index = 0; index < words.length; index++)
      words[index] = view.getUint16(index * 2, isLittle);
    const variant = set.variants[file.variant];
    const values = storedValues(words, variant.bitsStored, variant.isSigned);
    expect(errors(values, originalValues(variant.slices[file.frames[0]])).maxAbs).toBe(0);
  });
});
