/**
 * The RLE Lossless decoder on small frames made by hand from DICOM PS3.5 Annex G: the header
 * of G.5, the segments of G.2 (most significant bytes first) and the PackBits coding of G.3
 * (n ≥ 0: n + 1 literal bytes; −127 ≤ n ≤ −1: the next byte −n + 1 times; −128: nothing).
 * Every expected value below was worked out by hand from that definition. dcmcrle's files are
 * checked in reference-files.spec.ts.
 */
import { describe, expect, it } from 'vitest';
import { InstanceRefusal } from '../dicom-instance-reader';
import type { FrameLayout } from './frame-layout';
import { decodeRle, decodeSegment } from './rle';

function layout(rows: number, columns: number, bitsAllocated: 8 | 16): FrameLayout {
  return {
    rows,
    columns,
    bitsAllocated,
    bitsStored: bitsAllocated,
    isSigned: false,
    label: 'File 7',
  };
}

/** A frame: the 64-byte header (G.5) with the segments' offsets, then the segments. */
function rleFrame(segments: number[][], countOverride?: number): Uint8Array {
  const header = new Uint8Array(64);
  const view = new DataView(header.buffer);
  view.setUint32(0, countOverride ?? segments.length, true);
  let offset = 64;
  segments.forEach((segment, index) => {
    view.setUint32(4 + 4 * index, offset, true);
    offset += segment.length;
  });
  return Uint8Array.from([...header, ...segments.flat()]);
}

function segment(bytes: number[], count: number): number[] {
  return [...decodeSegment(Uint8Array.from(bytes), 0, bytes.length, count, 1, true, 'File 7')];
}

function refusal(action: () => unknown): InstanceRefusal {
  try {
    action();
  } catch (error) {
    if (error instanceof InstanceRefusal) return error;
    throw error;
  }
  throw new Error('expected a refusal');
}

describe('PackBits segments (PS3.5 G.3), worked by hand', () => {
  it('n = 2 copies the next 3 bytes literally', () => {
    expect(segment([0x02, 10, 20, 30], 3)).toEqual([10, 20, 30]);
  });

  it('n = −2 (0xFE) repeats the next byte 3 times', () => {
    expect(segment([0xfe, 7], 3)).toEqual([7, 7, 7]);
  });

  it('n = −128 (0x80) is skipped', () => {
    expect(segment([0x80, 0x00, 5], 1)).toEqual([5]);
  });

  it('the longest runs: n = 127 copies 128 bytes, n = −127 (0x81) repeats 128 times', () => {
    const literal = Array.from({ length: 128 }, (_, index) => index);
    expect(segment([0x7f, ...literal], 128)).toEqual(literal);
    expect(segment([0x81, 9], 128)).toEqual(new Array(128).fill(9));
  });

  it('a mixed segment: FE AA 02 80 00 2A FD AA 03 80 00 2A 22 F7 AA', () => {
    // 3 × AA; 80 00 2A; 4 × AA; 80 00 2A 22; 10 × AA: 24 bytes.
    const packed = [
      0xfe, 0xaa, 0x02, 0x80, 0x00, 0x2a, 0xfd, 0xaa, 0x03, 0x80, 0x00, 0x2a, 0x22, 0xf7, 0xaa,
    ];
    const expected = [
      ...[0xaa, 0xaa, 0xaa],
      ...[0x80, 0x00, 0x2a],
      ...[0xaa, 0xaa, 0xaa, 0xaa],
      ...[0x80, 0x00, 0x2a, 0x22],
      ...new Array(10).fill(0xaa),
    ];
    expect(segment(packed, 24)).toEqual(expected);
  });

  it("stops at the segment's byte count: a padding byte after it is not read as a run", () => {
    // G.3: segments are padded to an even length; here 3 bytes of run then one pad byte.
    expect(segment([0xfe, 4, 0x00], 3)).toEqual([4, 4, 4]);
  });
});

describe('RLE frames (PS3.5 G.2, G.5), worked by hand', () => {
  it('8 bits allocated: one segment, the pixels row by row', () => {
    const frame = rleFrame([[0x05, 1, 2, 3, 4, 5, 6]]);
    const decoded = decodeRle(frame, layout(2, 3, 8));
    expect(decoded.values).toBeInstanceOf(Uint8Array);
    expect([...decoded.values]).toEqual([1, 2, 3, 4, 5, 6]);
    expect(decoded.isLossy).toBe(false);
  });

  it('16 bits allocated: segment 1 holds the most significant bytes, segment 2 the least', () => {
    // Pixels 0x0102, 0x0304, 0xFFFF, 0x0000: high bytes 01 03 FF 00, low bytes 02 04 FF 00;
    // segment 1 padded to an even length (6 bytes), so segment 2 starts at 70.
    const frame = rleFrame([
      [0x03, 0x01, 0x03, 0xff, 0x00, 0x00],
      [0x03, 0x02, 0x04, 0xff, 0x00, 0x00],
    ]);
    expect(new DataView(frame.buffer).getUint32(8, true)).toBe(70);
    const decoded = decodeRle(frame, layout(2, 2, 16));
    expect(decoded.values).toBeInstanceOf(Uint16Array);
    expect([...decoded.values]).toEqual([0x0102, 0x0304, 0xffff, 0x0000]);
  });

  it('16 bits allocated with runs: 4 × 0x0400 then 2 × 0x0401', () => {
    // High bytes: 6 × 04 → FB 04. Low bytes: 4 × 00, 2 × 01 → FD 00 FF 01.
    const frame = rleFrame([
      [0xfb, 0x04],
      [0xfd, 0x00, 0xff, 0x01],
    ]);
    expect([...decodeRle(frame, layout(2, 3, 16)).values]).toEqual([
      0x0400, 0x0400, 0x0400, 0x0400, 0x0401, 0x0401,
    ]);
  });
});

describe('RLE refusals: wrong segment counts, offsets and runs', () => {
  it('a 16-bit frame with one segment', () => {
    const error = refusal(() => decodeRle(rleFrame([[0x03, 1, 2, 3, 4]]), layout(2, 2, 16)));
    expect(error.payload).toMatchObject({ status: 400, reason: 'malformed' });
    expect(error.payload.detail).toBe(
      'File 7: its RLE header announces 1 segment, where greyscale pixels of Bits Allocated 16 ' +
        'make 2 (DICOM PS3.5 G.2).',
    );
  });

  it('an 8-bit frame with three segments (colour), and a count beyond 15', () => {
    const three = rleFrame([
      [0x00, 1],
      [0x00, 2],
      [0x00, 3],
    ]);
    expect(refusal(() => decodeRle(three, layout(1, 1, 8))).payload.detail).toContain(
      'announces 3 segments',
    );
    const many = rleFrame([[0x00, 1]], 16);
    expect(refusal(() => decodeRle(many, layout(1, 1, 8))).payload.detail).toContain(
      'more than 15',
    );
  });

  it('a first segment that does not start at byte 64, or segments out of order', () => {
    const frame = rleFrame([
      [0x00, 1],
      [0x00, 2],
    ]);
    new DataView(frame.buffer).setUint32(4, 66, true);
    const first = refusal(() => decodeRle(frame, layout(1, 1, 16)));
    expect(first.payload).toMatchObject({ status: 400, reason: 'malformed' });
    expect(first.payload.detail).toContain('segment 1 at byte 66');
    const swapped = rleFrame([
      [0x00, 1],
      [0x00, 2],
    ]);
    new DataView(swapped.buffer).setUint32(8, 64, true);
    expect(refusal(() => decodeRle(swapped, layout(1, 1, 16))).payload.detail).toContain(
      'out of order',
    );
  });

  it('a segment placed past the end of the frame is truncation', () => {
    const frame = rleFrame([
      [0x00, 1],
      [0x00, 2],
    ]);
    new DataView(frame.buffer).setUint32(8, 500, true);
    expect(refusal(() => decodeRle(frame, layout(1, 1, 16))).payload).toMatchObject({
      reason: 'truncated',
    });
  });

  it('a run that would write past rows × columns (an overrun)', () => {
    // 2 × 2 pixels = 4 bytes, but the replicate run asks for 5.
    const error = refusal(() => decodeRle(rleFrame([[0xfc, 9]]), layout(2, 2, 8)));
    expect(error.payload).toMatchObject({ status: 400, reason: 'malformed' });
    expect(error.payload.detail).toBe(
      'File 7: RLE segment 1 holds a run that goes past the 4 bytes of the frame (rows × ' +
        'columns; DICOM PS3.5 G.3).',
    );
  });

  it('a literal run that reads past its segment, and a last segment cut short', () => {
    // Segment 1 announces 4 literal bytes but holds 2 before segment 2 begins.
    const inner = rleFrame([
      [0x03, 1, 2],
      [0x03, 5, 6, 7, 8],
    ]);
    expect(refusal(() => decodeRle(inner, layout(2, 2, 16))).payload).toMatchObject({
      reason: 'malformed',
    });
    const short = rleFrame([
      [0x03, 1, 2, 3, 4],
      [0x01, 5, 6],
    ]);
    const error = refusal(() => decodeRle(short, layout(2, 2, 16)));
    expect(error.payload).toMatchObject({ reason: 'truncated' });
    expect(error.payload.detail).toContain('segment 2 ends after 2 of the 4 bytes');
  });

  it('a frame shorter than its header', () => {
    expect(refusal(() => decodeRle(new Uint8Array(40), layout(1, 1, 8))).payload).toMatchObject({
      reason: 'truncated',
    });
  });
});
