/**
 * Test PNGs written by the PNG specification (W3C PNG 3rd edition, §5 datastream structure,
 * §11.2.2 IHDR, §7.3 filter type 0 per scanline, zlib stream per RFC 1950, CRC-32 per ISO 3309
 * as §5.5 names it), and read back with png-js (the decoder pdfkit itself uses) as the
 * independent reference.
 */
import { createRequire } from 'node:module';
import { crc32, deflateSync } from 'node:zlib';

export const pngSignature = Uint8Array.from([137, 80, 78, 71, 13, 10, 26, 10]);

export function chunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length);
  const view = new DataView(out.buffer);
  view.setUint32(0, data.length);
  out.set(Buffer.from(type, 'latin1'), 4);
  out.set(data, 8);
  view.setUint32(8 + data.length, crc32(out.subarray(4, 8 + data.length)));
  return out;
}

export function ihdr(width: number, height: number, colourType = 6, bitDepth = 8): Uint8Array {
  const data = new Uint8Array(13);
  const view = new DataView(data.buffer);
  view.setUint32(0, width);
  view.setUint32(4, height);
  data[8] = bitDepth;
  data[9] = colourType;
  return chunk('IHDR', data);
}

export function concat(parts: readonly Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((sum, part) => sum + part.length, 0));
  let at = 0;
  for (const part of parts) {
    out.set(part, at);
    at += part.length;
  }
  return out;
}

/** An 8-bit RGBA PNG of `pixel(x, y)`, with extra chunks placed after IHDR. */
export function rgbaPng(
  width: number,
  height: number,
  pixel: (x: number, y: number) => [number, number, number, number],
  extra: readonly Uint8Array[] = [],
): Uint8Array {
  const raw = new Uint8Array(height * (1 + width * 4));
  for (let y = 0; y < height; y += 1) {
    const row = y * (1 + width * 4);
    raw[row] = 0; // filter type None
    for (let x = 0; x < width; x += 1) raw.set(pixel(x, y), row + 1 + x * 4);
  }
  return concat([
    pngSignature,
    ihdr(width, height),
    ...extra,
    chunk('IDAT', deflateSync(raw)),
    chunk('IEND', new Uint8Array()),
  ]);
}

/** A tEXt chunk (keyword, NUL, text; PNG §11.3.3.3). */
export function textChunk(keyword: string, text: string): Uint8Array {
  return chunk('tEXt', Buffer.from(`${keyword}\0${text}`, 'latin1'));
}

/** The chunk types of a PNG, in order. */
export function chunkTypes(png: Uint8Array): string[] {
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  const types: string[] = [];
  for (let offset = 8; offset < png.length; offset += 12 + view.getUint32(offset)) {
    types.push(Buffer.from(png.subarray(offset + 4, offset + 8)).toString('latin1'));
  }
  return types;
}

interface PngJs {
  width: number;
  height: number;
  decode(done: (pixels: Buffer) => void): void;
}
const PngJsClass = createRequire(import.meta.url)('png-js') as new (data: Buffer) => PngJs;

/** RGBA pixels as png-js decodes them. */
export function decodeWithPngJs(
  png: Uint8Array,
): Promise<{ width: number; height: number; pixels: Uint8Array }> {
  const decoder = new PngJsClass(Buffer.from(png));
  return new Promise((resolve) =>
    decoder.decode((pixels) =>
      resolve({ width: decoder.width, height: decoder.height, pixels: new Uint8Array(pixels) }),
    ),
  );
}
