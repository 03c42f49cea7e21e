/**
 * JPEG Lossless, process 14 (ITU-T T.81 Annex H: predictive coding, Huffman, sequential), of
 * transfer syntaxes 1.2.840.10008.1.2.4.57 and .70 (.70 fixes the predictor to selection value
 * 1). Decoded by the jpeg-lossless-decoder-js package (plain JavaScript); this module reads the
 * headers first (so a damaged one never reaches the decoder) and checks afterwards that the
 * decoder placed every pixel, since it stops quietly where its data run out.
 */
import { createRequire } from 'node:module';
import { checkShape, type DecodedFrame, type FrameLayout } from './frame-layout';
import { hexByte, readJpegHeader } from './jpeg-markers';
import { quotable, refuse } from './refusal';

/** The parts of the package's Decoder used here. */
interface LosslessDecoder {
  decode(
    buffer: ArrayBufferLike,
    offset: number,
    length: number,
    numBytes: number,
  ): Uint8Array | Uint16Array;
  xLoc: number;
  yLoc: number;
  xDim: number;
  yDim: number;
  stream: { index: number } | null;
}

const require = createRequire(import.meta.url);
const { Decoder } = require('jpeg-lossless-decoder-js') as { Decoder: new () => LosslessDecoder };

const what = 'JPEG Lossless';

/** Process 14 reads the whole image in one scan: at most this many bytes after it. */
const maxBytesAfterScan = 8;

export function decodeJpegLossless(frame: Uint8Array, layout: FrameLayout): DecodedFrame {
  const { label } = layout;
  const header = readJpegHeader(frame, what, label);
  if (header.sofMarker !== 0xc3) {
    refuse(
      415,
      'pixel-format',
      `${label}: its JPEG codestream is coded with frame type SOF${sofNumber(header.sofMarker)} ` +
        `(marker FF${hexByte(header.sofMarker)}); this transfer syntax, and Emberline, take ` +
        'lossless process 14 with Huffman coding (SOF3) only.',
    );
  }
  // T.81 H.1.2.1: lossless precision is 2 to 16 bits; predictors 1 to 7 (Table H.1).
  if (header.precision < 2 || header.precision > 16 || header.ss < 1 || header.ss > 7) {
    refuse(
      400,
      'malformed',
      `${label}: its JPEG Lossless codestream has precision ${header.precision} and predictor ` +
        `${header.ss}; process 14 allows precision 2 to 16 and predictors 1 to 7.`,
    );
  }
  checkShape({ ...header, isSigned: null }, layout, what);
  // A point transform drops low bits (T.81 H.1.2.2): lossy, and the decoder would ignore it.
  if (header.al !== 0) {
    refuse(
      415,
      'pixel-format',
      `${label}: its JPEG Lossless codestream uses a point transform of ${header.al} bits, which ` +
        'discards the low bits of every pixel; Emberline does not decode it.',
    );
  }
  const decoder = new Decoder();
  let values: Uint8Array | Uint16Array;
  try {
    values = decoder.decode(
      frame.buffer,
      frame.byteOffset,
      frame.byteLength,
      layout.bitsAllocated / 8,
    );
  } catch (error) {
    refuse(
      400,
      'malformed',
      `${label}: its JPEG Lossless codestream cannot be decoded (${quotable(String(error))}).`,
    );
  }
  const count = layout.rows * layout.columns;
  const isComplete =
    decoder.xDim === layout.columns &&
    decoder.yDim === layout.rows &&
    decoder.yLoc >= layout.rows &&
    values.length === count;
  if (!isComplete) {
    refuse(
      400,
      'malformed',
      `${label}: its JPEG Lossless data end before the last pixel: the codestream is damaged.`,
    );
  }
  // A damaged Huffman code can also make the decoder place every pixel early and stop.
  const consumed = decoder.stream?.index ?? 0;
  if (consumed > header.eoiOffset + 2 || header.eoiOffset - consumed > maxBytesAfterScan) {
    refuse(
      400,
      'malformed',
      `${label}: its JPEG Lossless scan does not end where its data end: the codestream is ` +
        'damaged.',
    );
  }
  return { values, isLossy: false };
}

function sofNumber(marker: number): string {
  return marker >= 0xc0 && marker <= 0xcf ? String(marker - 0xc0) : `(${hexByte(marker)})`;
}
