/**
 * Reads the marker segments at the head of a JPEG (ITU-T T.81 | ISO/IEC 10918-1, Annex B) or
 * JPEG-LS (ITU-T T.87 | ISO/IEC 14495-1, Annex C) codestream, up to its first scan header:
 * the frame header gives rows, columns, components and precision before anything is decoded,
 * and the scan header the predictor (JPEG) or NEAR (JPEG-LS) and the point transform. Both
 * standards share the marker syntax: 0xFF, a marker code, and for all but the standalone
 * markers a two-byte big-endian length that counts itself.
 */
import { refuse } from './refusal';

export interface JpegFrameHeader {
  /** The SOF marker code: 0xC3 lossless Huffman (T.81 process 14), 0xF7 JPEG-LS (SOF55). */
  sofMarker: number;
  precision: number;
  rows: number;
  columns: number;
  components: number;
  /** Of the first scan: T.81 B.2.3 Ss (predictor, process 14) / T.87 C.2.3 NEAR. */
  ss: number;
  /** T.81 Se / T.87 ILV (interleave mode). */
  se: number;
  /** The point transform: T.81 Al / T.87 Al (low half of the last byte of the scan header). */
  al: number;
  /** Offset of the EOI marker that ends the codestream (trailing zero padding allowed). */
  eoiOffset: number;
}

const SOI = 0xd8;
const EOI = 0xd9;
const SOS = 0xda;

/** Markers without a length: TEM and RST0–RST7 (T.81 Table B.1). */
function isStandalone(marker: number): boolean {
  return marker === 0x01 || (marker >= 0xd0 && marker <= 0xd7);
}

/** SOF0–SOF15 but DHT (C4), JPG (C8) and DAC (CC); SOF55 (F7) and SOF57 (F9) of JPEG-LS. */
function isStartOfFrame(marker: number): boolean {
  return (
    (marker >= 0xc0 && marker <= 0xcf && ![0xc4, 0xc8, 0xcc].includes(marker)) ||
    marker === 0xf7 ||
    marker === 0xf9
  );
}

/**
 * The codestream must end with EOI, possibly followed by zero bytes (fragments are padded to
 * an even length, PS3.5 A.4): a stream that ends elsewhere was cut short.
 */
function findEoi(frame: Uint8Array, what: string, label: string): number {
  let end = frame.length;
  while (end > 0 && frame[end - 1] === 0) end--;
  if (end < 4 || frame[end - 2] !== 0xff || frame[end - 1] !== EOI) {
    refuse(
      400,
      'truncated',
      `${label}: its ${what} codestream does not end with the EOI marker (FFD9); it was cut ` +
        'short.',
    );
  }
  return end - 2;
}

export function readJpegHeader(frame: Uint8Array, what: string, label: string): JpegFrameHeader {
  if (frame.length < 2 || frame[0] !== 0xff || frame[1] !== SOI) {
    refuse(
      400,
      'malformed',
      `${label}: its ${what} codestream does not open with the SOI marker (FFD8).`,
    );
  }
  const eoiOffset = findEoi(frame, what, label);
  const cutShort = (): never =>
    refuse(400, 'truncated', `${label}: its ${what} codestream ends inside a marker segment.`);
  let frameHeader: Omit<JpegFrameHeader, 'ss' | 'se' | 'al' | 'eoiOffset'> | null = null;
  let at = 2;
  for (;;) {
    if (at >= eoiOffset) cutShort();
    if (frame[at] !== 0xff) {
      refuse(
        400,
        'malformed',
        `${label}: its ${what} codestream holds a byte that is not a marker where one must be ` +
          `(offset ${at}).`,
      );
    }
    // Any number of 0xFF fill bytes may precede a marker (T.81 B.1.1.2).
    while (at < eoiOffset && frame[at] === 0xff) at++;
    if (at >= eoiOffset) cutShort();
    const marker = frame[at];
    at++;
    if (isStandalone(marker)) continue;
    if (marker === SOI || marker === EOI || marker === 0x00) {
      refuse(
        400,
        'malformed',
        `${label}: its ${what} codestream holds marker FF${hexByte(marker)} before its first scan.`,
      );
    }
    if (at + 2 > eoiOffset) cutShort();
    const length = (frame[at] << 8) | frame[at + 1];
    if (length < 2) {
      refuse(
        400,
        'malformed',
        `${label}: its ${what} codestream has a marker segment of length ${length}.`,
      );
    }
    if (at + length > eoiOffset) cutShort();
    const segment = frame.subarray(at + 2, at + length);
    if (isStartOfFrame(marker)) {
      if (frameHeader) {
        refuse(400, 'malformed', `${label}: its ${what} codestream holds two frame headers.`);
      }
      // T.81 B.2.2 / T.87 C.2.2: P, Y, X, Nf, then three bytes per component.
      if (segment.length < 6 || segment.length !== 6 + 3 * segment[5]) {
        refuse(400, 'malformed', `${label}: its ${what} frame header has a wrong length.`);
      }
      frameHeader = {
        sofMarker: marker,
        precision: segment[0],
        rows: (segment[1] << 8) | segment[2],
        columns: (segment[3] << 8) | segment[4],
        components: segment[5],
      };
    } else if (marker === SOS) {
      if (!frameHeader) {
        refuse(
          400,
          'malformed',
          `${label}: its ${what} codestream has a scan before its frame header.`,
        );
      }
      // T.81 B.2.3 / T.87 C.2.3: Ns, two bytes per component, Ss (NEAR), Se (ILV), Ah|Al.
      if (segment.length < 1 || segment.length !== 4 + 2 * segment[0]) {
        refuse(400, 'malformed', `${label}: its ${what} scan header has a wrong length.`);
      }
      const tail = 1 + 2 * segment[0];
      return {
        ...frameHeader,
        ss: segment[tail],
        se: segment[tail + 1],
        al: segment[tail + 2] & 0x0f,
        eoiOffset,
      };
    }
    at += length;
  }
}

export function hexByte(value: number): string {
  return value.toString(16).toUpperCase().padStart(2, '0');
}
