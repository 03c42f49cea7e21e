import { endianness } from 'node:os';

/** The labels as little-endian bytes of the narrowest type that holds them. */
export function storedVoxels(
  labels: Uint16Array,
  largest: number,
): {
  dataType: 'uint8' | 'uint16';
  bytes: Uint8Array;
} {
  if (largest <= 255) return { dataType: 'uint8', bytes: Uint8Array.from(labels) };
  if (endianness() === 'LE') {
    return {
      dataType: 'uint16',
      bytes: new Uint8Array(labels.buffer, labels.byteOffset, labels.byteLength),
    };
  }
  const bytes = new Uint8Array(labels.byteLength);
  const view = new DataView(bytes.buffer);
  labels.forEach((value, index) => view.setUint16(index * 2, value, true));
  return { dataType: 'uint16', bytes };
}
