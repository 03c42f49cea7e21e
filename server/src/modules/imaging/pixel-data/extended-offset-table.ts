/**
 * dicom-parser 1.8.21 does not know the VR OV (added to DICOM in 2019): in an explicit VR
 * file it reads an OV element's length from two bytes instead of the reserved two plus four
 * (PS3.5 7.1.2), and loses its place. The Extended Offset Table (7FE0,0001) and its Lengths
 * (7FE0,0002) are OV and come right before Pixel Data, so a file that has them cannot be
 * parsed. OB has the same layout (reserved bytes and a 4-byte length) and dicom-parser knows
 * it: this gives back a copy whose two elements say OB, for dicom-parser to read; their values
 * are untouched. Only elements found in sequence (0001, maybe 0002, then Pixel Data of OB or
 * OW, each of explicit VR little endian) are changed, so bytes elsewhere that merely look alike
 * stay as they are.
 */

const ov = [0x4f, 0x56]; // "OV"

function isElementHeader(bytes: Uint8Array, at: number, element: number, vrs: number[][]): boolean {
  if (at + 12 > bytes.length) return false;
  const isTag =
    bytes[at] === 0xe0 &&
    bytes[at + 1] === 0x7f &&
    bytes[at + 2] === element &&
    bytes[at + 3] === 0x00;
  const isVr = vrs.some(([first, second]) => bytes[at + 4] === first && bytes[at + 5] === second);
  return isTag && isVr && bytes[at + 6] === 0 && bytes[at + 7] === 0;
}

function valueLength(bytes: Uint8Array, at: number): number {
  return new DataView(bytes.buffer, bytes.byteOffset + at + 8, 4).getUint32(0, true);
}

/** The bytes, or a copy in which a well-placed Extended Offset Table reads as OB. */
export function withExtendedOffsetTableReadable(bytes: Uint8Array): Uint8Array {
  const pixelDataVrs = [
    [0x4f, 0x42], // OB
    [0x4f, 0x57], // OW
  ];
  const signature = Uint8Array.of(0xe0, 0x7f, 0x01, 0x00, ...ov, 0, 0);
  let from = 0;
  for (;;) {
    const at = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).indexOf(
      signature,
      from,
    );
    if (at < 0) return bytes;
    from = at + 1;
    const tableEnd = at + 12 + valueLength(bytes, at);
    let lengths: number | null = null;
    let next = tableEnd;
    if (isElementHeader(bytes, tableEnd, 0x02, [ov])) {
      lengths = tableEnd;
      next = tableEnd + 12 + valueLength(bytes, tableEnd);
    }
    if (!isElementHeader(bytes, next, 0x10, pixelDataVrs)) continue;
    const copy = bytes.slice();
    copy[at + 5] = 0x42; // "OB"
    if (lengths !== null) copy[lengths + 5] = 0x42;
    return copy;
  }
}
