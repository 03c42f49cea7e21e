import { inflateSync } from 'node:zlib';

/** An 8-bit RGB or RGBA image decoded from a PNG, to read the colour of single pixels. */
export interface DecodedPng {
  width: number;
  height: number;
  channels: 3 | 4;
  data: Uint8Array;
}

/**
 * Decodes the non-interlaced 8-bit truecolour PNGs Chromium writes as screenshots (PNG, ISO/IEC
 * 15948: IHDR, IDAT chunks inflated with zlib, one filter byte per scanline, filters 0–4 with the
 * Paeth predictor). Anything else is refused.
 */
export function decodePng(bytes: Uint8Array): DecodedPng {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let offset = 8;
  let width = 0;
  let height = 0;
  let channels: 3 | 4 = 4;
  const compressed: Uint8Array[] = [];
  while (offset < bytes.length) {
    const length = view.getUint32(offset);
    const type = String.fromCharCode(...bytes.subarray(offset + 4, offset + 8));
    const body = bytes.subarray(offset + 8, offset + 8 + length);
    if (type === 'IHDR') {
      width = view.getUint32(offset + 8);
      height = view.getUint32(offset + 12);
      const [bitDepth, colourType, , , interlace] = body.subarray(8, 13);
      if (bitDepth !== 8 || (colourType !== 2 && colourType !== 6) || interlace !== 0) {
        throw new Error(`unsupported PNG (depth ${bitDepth}, colour type ${colourType})`);
      }
      channels = colourType === 6 ? 4 : 3;
    } else if (type === 'IDAT') {
      compressed.push(body);
    } else if (type === 'IEND') {
      break;
    }
    offset += 12 + length;
  }
  const raw = inflateSync(Buffer.concat(compressed));
  const stride = width * channels;
  const data = new Uint8Array(stride * height);
  for (let row = 0; row < height; row++) {
    const filter = raw[row * (stride + 1)];
    const line = raw.subarray(row * (stride + 1) + 1, (row + 1) * (stride + 1));
    for (let x = 0; x < stride; x++) {
      const left = x >= channels ? data[row * stride + x - channels] : 0;
      const up = row > 0 ? data[(row - 1) * stride + x] : 0;
      const upLeft = row > 0 && x >= channels ? data[(row - 1) * stride + x - channels] : 0;
      let predictor = 0;
      if (filter === 1) predictor = left;
      else if (filter === 2) predictor = up;
      else if (filter === 3) predictor = (left + up) >> 1;
      else if (filter === 4) {
        const estimate = left + up - upLeft;
        const distances = [
          Math.abs(estimate - left),
          Math.abs(estimate - up),
          Math.abs(estimate - upLeft),
        ];
        predictor =
          distances[0] <= distances[1] && distances[0] <= distances[2]
            ? left
            : distances[1] <= distances[2]
              ? up
              : upLeft;
      }
      data[row * stride + x] = (line[x] + predictor) & 255;
    }
  }
  return { width, height, channels, data };
}

/** The mean colour of the pixels within `radius` of (x, y), as [r, g, b]. */
export function meanColour(
  image: DecodedPng,
  x: number,
  y: number,
  radius = 2,
): [number, number, number] {
  const sum = [0, 0, 0];
  let count = 0;
  for (let row = Math.round(y) - radius; row <= Math.round(y) + radius; row++) {
    for (let column = Math.round(x) - radius; column <= Math.round(x) + radius; column++) {
      if (row < 0 || column < 0 || row >= image.height || column >= image.width) continue;
      const at = (row * image.width + column) * image.channels;
      for (let channel = 0; channel < 3; channel++) sum[channel] += image.data[at + channel];
      count++;
    }
  }
  return [sum[0] / count, sum[1] / count, sum[2] / count];
}
