/**
 * Start-up and memory of the WebAssembly codecs: nothing decodes before `initialiseCodecs`,
 * instances are made on first use, and `releaseCodecMemory` gives back memory a decoder grew
 * (WebAssembly memory never shrinks by itself). The large frame is made by Debian's
 * opj_compress from a gradient whose every value is known.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import dicomParser from 'dicom-parser';
import { afterAll, describe, expect, it } from 'vitest';
import { compressedDicomSet, uids } from '../../../../../test/support/compressed-dicom';
import { InstanceRefusal } from '../dicom-instance-reader';
import {
  decodeFrame,
  encapsulatedFrames,
  initialiseCodecs,
  releaseCodecMemory,
  transferSyntaxes,
  wasmMemoryBytes,
  type FrameLayout,
} from './index';

const set = compressedDicomSet();
const mebibyte = 1024 * 1024;
const syntax = (uid: string) => {
  const found = transferSyntaxes.get(uid);
  if (!found) throw new Error(uid);
  return found;
};

function jpegLsFrame(): { frame: Uint8Array; layout: FrameLayout } {
  const file = set.files.find(
    (candidate) => candidate.transferSyntaxUid === uids.jpegLs && candidate.frames.length === 1,
  );
  if (!file) throw new Error('no JPEG-LS file');
  const dataSet = dicomParser.parseDicom(readFileSync(file.path));
  const [frame] = encapsulatedFrames(dataSet, dataSet.elements.x7fe00010, 1, 'File 1');
  return {
    frame,
    layout: {
      rows: 160,
      columns: 192,
      bitsAllocated: 16,
      bitsStored: 16,
      isSigned: true,
      label: 'File 1',
    },
  };
}

/** 4096 × 2048 12-bit samples, value (7x + 3y) mod 4096: made by opj_compress, lossless. */
const big = { columns: 4096, rows: 2048 };
const folder = mkdtempSync(join(tmpdir(), 'emberline-wasm-memory-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

function gradient(x: number, y: number): number {
  return (7 * x + 3 * y) % 4096;
}

function bigJpeg2000(): Uint8Array {
  const values = new Uint16Array(big.columns * big.rows);
  for (let y = 0; y < big.rows; y++) {
    for (let x = 0; x < big.columns; x++) values[y * big.columns + x] = gradient(x, y);
  }
  writeFileSync(join(folder, 'big.rawl'), new Uint8Array(values.buffer));
  execFileSync(
    'opj_compress',
    ['-i', 'big.rawl', '-o', 'big.j2k', '-F', `${big.columns},${big.rows},1,12,u`],
    { cwd: folder, stdio: 'ignore' },
  );
  return new Uint8Array(readFileSync(join(folder, 'big.j2k')));
}

describe('before initialiseCodecs', () => {
  it("decodeFrame throws a plain Error (a programming error, not the file's fault)", () => {
    const { frame, layout } = jpegLsFrame();
    let thrown: unknown = null;
    try {
      decodeFrame(syntax(uids.jpegLs), frame, layout);
    } catch (error) {
      thrown = error;
    }
    expect(thrown).toBeInstanceOf(Error);
    expect(thrown).not.toBeInstanceOf(InstanceRefusal);
    expect((thrown as Error).message).toContain('initialiseCodecs');
  });
});

describe('after initialiseCodecs', () => {
  it("makes no instance until a codec is used; then the build's initial memory", async () => {
    await initialiseCodecs();
    await initialiseCodecs();
    expect(wasmMemoryBytes()).toEqual({ charls: 0, openjpeg: 0 });
    const { frame, layout } = jpegLsFrame();
    expect(decodeFrame(syntax(uids.jpegLs), frame, layout).values).toHaveLength(160 * 192);
    const bytes = wasmMemoryBytes();
    // The CharLS WebAssembly build starts with 50 MiB of memory.
    expect(bytes.charls).toBe(50 * mebibyte);
    expect(bytes.openjpeg).toBe(0);
  });

  it('a native syntax is a programming error too', () => {
    const { frame, layout } = jpegLsFrame();
    expect(() => decodeFrame(syntax(uids.explicitLittle), frame, layout)).toThrow(
      'decodeFrame has no codec for the transfer syntax 1.2.840.10008.1.2.1.',
    );
  });

  it('gives back memory a decoder grew, and only that', () => {
    const codestream = bigJpeg2000();
    const layout: FrameLayout = {
      ...big,
      bitsAllocated: 16,
      bitsStored: 12,
      isSigned: false,
      label: 'File 9',
    };
    const decoded = decodeFrame(syntax(uids.j2kLossless), codestream, layout);
    // Spot checks of the gradient, every 997th value.
    for (let index = 0; index < decoded.values.length; index += 997) {
      const x = index % big.columns;
      const y = Math.floor(index / big.columns);
      expect(decoded.values[index]).toBe(gradient(x, y));
    }
    const grown = wasmMemoryBytes().openjpeg;
    expect(grown).toBeGreaterThan(50 * mebibyte);

    releaseCodecMemory(grown);
    expect(wasmMemoryBytes().openjpeg).toBe(grown);
    // CharLS never grew past its initial memory: kept, even below a tiny limit.
    releaseCodecMemory(mebibyte);
    expect(wasmMemoryBytes()).toEqual({ charls: 50 * mebibyte, openjpeg: 0 });

    const { frame, layout: small } = jpegLsFrame();
    expect(decodeFrame(syntax(uids.jpegLs), frame, small).values).toHaveLength(160 * 192);
    const again = decodeFrame(syntax(uids.j2kLossless), codestream, layout);
    expect(again.values[big.columns * 5 + 11]).toBe(gradient(11, 5));
  });
});
