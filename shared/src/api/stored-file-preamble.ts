/**
 * The preamble of Emberline's stored voxel files (volumes, label maps): an 8-byte ASCII magic, a
 * little-endian uint32 header length, then an ASCII JSON header padded with spaces so that the
 * voxels start on an 8-byte boundary. One layout, read and written here for every format.
 */
const magicLength = 8;
const lengthFieldBytes = 4;
const voxelAlignment = 8;

/** Writes the preamble: `magic` (8 ASCII characters), then `header` as padded ASCII JSON. */
export function encodeStoredFilePreamble(magic: string, header: unknown): Uint8Array {
  if (magic.length !== magicLength) throw new RangeError(`a magic of ${magicLength} characters`);
  // Escape anything beyond ASCII so that one byte is one character both ways.
  const json = JSON.stringify(header).replace(
    /[\u007f-\uffff]/g,
    (character) => `\\u${character.charCodeAt(0).toString(16).padStart(4, '0')}`,
  );
  const unpadded = magicLength + lengthFieldBytes + json.length;
  const padding = (voxelAlignment - (unpadded % voxelAlignment)) % voxelAlignment;
  const headerText = json + ' '.repeat(padding);
  const bytes = new Uint8Array(magicLength + lengthFieldBytes + headerText.length);
  for (let index = 0; index < magicLength; index++) bytes[index] = magic.charCodeAt(index);
  new DataView(bytes.buffer).setUint32(magicLength, headerText.length, true);
  for (let index = 0; index < headerText.length; index++) {
    bytes[magicLength + lengthFieldBytes + index] = headerText.charCodeAt(index);
  }
  return bytes;
}

/**
 * Reads the preamble: checks the magic and the header length, parses the JSON. Answers the
 * parsed header (unchecked: the caller validates it) and where the voxels start. Every fault
 * is reported through `refuse` with a sentence naming `what` ("The volume", "The label map").
 */
export function decodeStoredFilePreamble(
  bytes: Uint8Array,
  options: {
    magic: string;
    what: string;
    maxHeaderBytes: number;
    refuse: (message: string) => Error;
  },
): { header: unknown; voxelOffset: number } {
  const { magic, what, refuse } = options;
  const fixedBytes = magicLength + lengthFieldBytes;
  if (bytes.length < fixedBytes) throw refuse(`${what} body is too short.`);
  for (let index = 0; index < magicLength; index++) {
    if (bytes[index] !== magic.charCodeAt(index)) {
      throw refuse(`${what} body does not start with ${magic}.`);
    }
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const headerBytes = view.getUint32(magicLength, true);
  if (headerBytes > options.maxHeaderBytes || fixedBytes + headerBytes > bytes.length) {
    throw refuse(`${what} header length is out of range.`);
  }
  let json = '';
  for (let index = 0; index < headerBytes; index++) {
    json += String.fromCharCode(bytes[fixedBytes + index] ?? 0);
  }
  try {
    return { header: JSON.parse(json) as unknown, voxelOffset: fixedBytes + headerBytes };
  } catch {
    throw refuse(`${what} header is not JSON.`);
  }
}
