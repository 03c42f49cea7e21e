/**
 * RLE Lossless, transfer syntax 1.2.840.10008.1.2.5, written here from DICOM PS3.5 Annex G
 * (section numbers from memory):
 *
 * - G.5, the RLE header: 16 unsigned 32-bit little-endian integers (64 bytes); the first is
 *   the number of segments (at most 15), the others the byte offset of each segment from the
 *   start of the header (the first therefore 64), unused ones 0.
 * - G.2, segments: one per byte of each sample. A greyscale pixel of Bits Allocated 8 makes one
 *   segment, of 16 two: segment 1 holds the most significant bytes of every pixel, segment 2
 *   the least significant. Each segment holds rows × columns bytes, row by row.
 * - G.3, the byte run length (PackBits) coding of a segment: a header byte n read as a signed
 *   8-bit number; 0 ≤ n ≤ 127 → copy the next n + 1 bytes literally; −127 ≤ n ≤ −1 → repeat
 *   the next byte −n + 1 times; n = −128 → nothing. Segments are padded to an even length.
 *
 * Anything that does not fit (a wrong segment count, offsets out of order, a run that would
 * write past the segment's bytes or read past its end) is refused, never guessed around.
 */
import type { DecodedFrame, FrameLayout } from './frame-layout';
import { refuse } from './refusal';

const headerBytes = 64;
const maxSegments = 15;

export function decodeRle(frame: Uint8Array, layout: FrameLayout): DecodedFrame {
  const { label } = layout;
  if (frame.length < headerBytes) {
    refuse(
      400,
      'truncated',
      `${label}: its RLE data hold ${frame.length} bytes, fewer than the 64-byte RLE header ` +
        '(DICOM PS3.5 G.5).',
    );
  }
  const view = new DataView(frame.buffer, frame.byteOffset, frame.byteLength);
  const segmentCount = view.getUint32(0, true);
  const expected = layout.bitsAllocated / 8;
  if (segmentCount !== expected) {
    refuse(
      400,
      'malformed',
      `${label}: its RLE header announces ${segmentCount > maxSegments ? 'more than 15' : segmentCount} ` +
        `segment${segmentCount === 1 ? '' : 's'}, where greyscale pixels of Bits Allocated ` +
        `${layout.bitsAllocated} make ${expected} (DICOM PS3.5 G.2).`,
    );
  }
  const offsets: number[] = [];
  for (let index = 0; index < segmentCount; index++) {
    offsets.push(view.getUint32(4 + 4 * index, true));
  }
  offsets.forEach((offset, index) => {
    const previous = index === 0 ? headerBytes : offsets[index - 1];
    const isInOrder = index === 0 ? offset === headerBytes : offset > previous;
    if (!isInOrder || offset >= frame.length) {
      refuse(
        400,
        offset >= frame.length && isInOrder ? 'truncated' : 'malformed',
        `${label}: its RLE header puts segment ${index + 1} at byte ${offset}, which is ` +
          (offset >= frame.length && isInOrder
            ? `past the end of the ${frame.length} bytes of the frame.`
            : 'out of order (the first segment starts at 64, the next ones after it; PS3.5 G.5).'),
      );
    }
  });
  const count = layout.rows * layout.columns;
  const segments = offsets.map((start, index) => {
    const end = index + 1 < offsets.length ? offsets[index + 1] : frame.length;
    return decodeSegment(frame, start, end, count, index + 1, index + 1 === offsets.length, label);
  });
  if (segments.length === 1) return { values: segments[0], isLossy: false };
  const [high, low] = segments;
  const values = new Uint16Array(count);
  for (let index = 0; index < count; index++) values[index] = (high[index] << 8) | low[index];
  return { values, isLossy: false };
}

/** Decodes one PackBits segment (G.3) of `frame[start, end)` into exactly `count` bytes. */
export function decodeSegment(
  frame: Uint8Array,
  start: number,
  end: number,
  count: number,
  segmentNumber: number,
  isLast: boolean,
  label: string,
): Uint8Array {
  const out = new Uint8Array(count);
  let read = start;
  let written = 0;
  const overrun = (): never =>
    refuse(
      400,
      'malformed',
      `${label}: RLE segment ${segmentNumber} holds a run that goes past the ${count} bytes of ` +
        'the frame (rows × columns; DICOM PS3.5 G.3).',
    );
  const cutShort = (): never =>
    refuse(
      400,
      isLast ? 'truncated' : 'malformed',
      `${label}: RLE segment ${segmentNumber} ends after ${written} of the ${count} bytes of the ` +
        'frame (DICOM PS3.5 G.3).',
    );
  while (written < count) {
    if (read >= end) cutShort();
    const header = frame[read++];
    if (header < 128) {
      // n + 1 literal bytes.
      const length = header + 1;
      if (read + length > end) cutShort();
      if (written + length > count) overrun();
      out.set(frame.subarray(read, read + length), written);
      read += length;
      written += length;
    } else if (header > 128) {
      // The next byte −n + 1 times, with n = header − 256.
      const length = 257 - header;
      if (read >= end) cutShort();
      if (written + length > count) overrun();
      out.fill(frame[read++], written, written + length);
      written += length;
    }
    // header 128 (n = −128): nothing.
  }
  return out;
}
