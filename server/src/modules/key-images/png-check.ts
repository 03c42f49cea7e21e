/**
 * Reads a PNG's chunk layout (PNG specification, W3C 3rd edition, §5 "Datastream structure":
 * the 8-byte signature, then chunks of length, type, data and CRC-32, IHDR first and IEND last)
 * and answers a copy holding only the chunks a picture needs: nothing written into text chunks
 * or other metadata (an author, a file name, a time) reaches the store.
 */
import { crc32 } from 'node:zlib';

/** 137 80 78 71 13 10 26 10 (PNG §5.2). */
const signature = Uint8Array.from([137, 80, 78, 71, 13, 10, 26, 10]);

/**
 * Chunks kept: the critical ones (IHDR, PLTE, IDAT, IEND) and the ancillary chunks that only
 * change how the pixels look (transparency, gamma, chromaticities, sRGB intent, significant
 * bits, background, pixel size). Everything else is dropped: the text chunks tEXt, zTXt and
 * iTXt, eXIf, tIME, iCCP (its profile name is free text), and any private chunk.
 */
const keptChunks = new Set([
  'IHDR',
  'PLTE',
  'IDAT',
  'IEND',
  'tRNS',
  'gAMA',
  'cHRM',
  'sRGB',
  'sBIT',
  'bKGD',
  'pHYs',
]);

/** Bit depths allowed per colour type (PNG §11.2.2, Table 11.1). */
const allowedBitDepths: Record<number, readonly number[]> = {
  0: [1, 2, 4, 8, 16],
  2: [8, 16],
  3: [1, 2, 4, 8],
  4: [8, 16],
  6: [8, 16],
};

export interface CheckedPng {
  widthPx: number;
  heightPx: number;
  /** The PNG without the dropped chunks. */
  bytes: Uint8Array;
  /** The types of the chunks dropped, in order (for the audit). */
  dropped: string[];
}

export class PngRefusal extends Error {}

/** Checks the layout and the limits; throws a PngRefusal saying what is wrong. */
export function checkPng(input: Uint8Array, maxSidePx: number): CheckedPng {
  if (input.byteLength < signature.length || signature.some((byte, i) => input[i] !== byte)) {
    throw new PngRefusal('The image is not a PNG (its first bytes are not the PNG signature).');
  }
  const view = new DataView(input.buffer, input.byteOffset, input.byteLength);
  const kept: Uint8Array[] = [signature];
  const dropped: string[] = [];
  let offset = signature.length;
  let widthPx = 0;
  let heightPx = 0;
  let hasData = false;
  let isEnded = false;
  let index = 0;
  while (offset < input.byteLength) {
    if (isEnded) throw new PngRefusal('The PNG has bytes after its IEND chunk.');
    if (offset + 12 > input.byteLength) throw new PngRefusal('The PNG ends inside a chunk.');
    const length = view.getUint32(offset);
    const end = offset + 12 + length;
    if (length > 0x7fffffff || end > input.byteLength) {
      throw new PngRefusal('The PNG ends inside a chunk.');
    }
    const type = String.fromCharCode(...input.subarray(offset + 4, offset + 8));
    if (!/^[A-Za-z]{4}$/.test(type)) throw new PngRefusal('The PNG holds a malformed chunk.');
    const storedCrc = view.getUint32(offset + 8 + length);
    if (crc32(input.subarray(offset + 4, offset + 8 + length)) !== storedCrc) {
      throw new PngRefusal(`The PNG's ${type} chunk fails its CRC check (the file is damaged).`);
    }
    if (index === 0) {
      if (type !== 'IHDR' || length !== 13) {
        throw new PngRefusal('The PNG does not start with its IHDR chunk.');
      }
      widthPx = view.getUint32(offset + 8);
      heightPx = view.getUint32(offset + 12);
      const bitDepth = input[offset + 16];
      const colourType = input[offset + 17];
      if (!allowedBitDepths[colourType]?.includes(bitDepth)) {
        throw new PngRefusal('The PNG has an invalid colour type or bit depth.');
      }
      if (input[offset + 18] !== 0 || input[offset + 19] !== 0 || input[offset + 20] > 1) {
        throw new PngRefusal('The PNG names an unknown compression, filter or interlace method.');
      }
      if (widthPx < 1 || heightPx < 1) throw new PngRefusal('The PNG has no pixels.');
      if (widthPx > maxSidePx || heightPx > maxSidePx) {
        throw new PngRefusal(
          `The image is ${widthPx} × ${heightPx} pixels; at most ${maxSidePx} × ${maxSidePx} is kept.`,
        );
      }
    } else if (type === 'IHDR') {
      throw new PngRefusal('The PNG holds a second IHDR chunk.');
    }
    if (type === 'IDAT') hasData = true;
    if (type === 'IEND') isEnded = true;
    const isCritical = type.charCodeAt(0) < 97; // upper-case first letter (PNG §5.4)
    if (keptChunks.has(type)) kept.push(input.subarray(offset, end));
    else if (isCritical) throw new PngRefusal(`The PNG holds an unknown critical chunk ${type}.`);
    else dropped.push(type);
    offset = end;
    index += 1;
  }
  if (!hasData) throw new PngRefusal('The PNG holds no image data (IDAT).');
  if (!isEnded) throw new PngRefusal('The PNG has no IEND chunk (the file is cut short).');
  const total = kept.reduce((sum, part) => sum + part.byteLength, 0);
  const bytes = new Uint8Array(total);
  let at = 0;
  for (const part of kept) {
    bytes.set(part, at);
    at += part.byteLength;
  }
  return { widthPx, heightPx, bytes, dropped };
}
