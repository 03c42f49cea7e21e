/** 16-bit samples out of little-endian bytes (WebAssembly memory is little-endian, PS3.5 A.4 data too). */

const isLittleEndianPlatform = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

export function uint16FromLittleEndian(bytes: Uint8Array, count: number): Uint16Array {
  const values = new Uint16Array(count);
  if (isLittleEndianPlatform) {
    new Uint8Array(values.buffer).set(bytes.subarray(0, count * 2));
  } else {
    for (let index = 0; index < count; index++) {
      values[index] = bytes[2 * index] | (bytes[2 * index + 1] << 8);
    }
  }
  return values;
}

export function int16FromLittleEndian(bytes: Uint8Array, count: number): Int16Array {
  const unsigned = uint16FromLittleEndian(bytes, count);
  return new Int16Array(unsigned.buffer, 0, count);
}
