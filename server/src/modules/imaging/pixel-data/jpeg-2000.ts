/**
 * JPEG 2000 (ITU-T T.800 | ISO/IEC 15444-1), transfer syntaxes 1.2.840.10008.1.2.4.90
 * (lossless only) and .91, decoded by the OpenJPEG WebAssembly build. The image and component
 * size marker (SIZ, 15444-1 A.5.1) is read here before decoding: that build's readHeader does
 * not report the frame's size, and the image must be the one the DICOM header describes
 * before the decoder allocates for it. OpenJPEG reports errors by printing them, not by
 * throwing: its messages are collected and any "[ERROR]" refuses the frame.
 */
import { InstanceRefusal } from '../dicom-instance-reader';
import {
  checkShape,
  type CodestreamShape,
  type DecodedFrame,
  type FrameLayout,
} from './frame-layout';
import { int16FromLittleEndian, uint16FromLittleEndian } from './little-endian';
import { quotable, refuse } from './refusal';
import {
  cppExceptionMessage,
  discardInstance,
  openJpeg,
  takeMessages,
  type OpenJpegModule,
} from './wasm-codecs';

const what = 'JPEG 2000';

/** JPEG 2000 allows at most 65 535 tiles (Isot of SOT is 0 to 65 534, 15444-1 A.4.2). */
const maxTiles = 65_535;

/** The JP2 file signature box (15444-1 I.5.1): not allowed in DICOM (PS3.5 A.4.4) but seen. */
const jp2Signature = [0x00, 0x00, 0x00, 0x0c, 0x6a, 0x50, 0x20, 0x20, 0x0d, 0x0a, 0x87, 0x0a];

export function decodeJpeg2000(frame: Uint8Array, layout: FrameLayout): DecodedFrame {
  const { label } = layout;
  const codestream = jp2Signature.every((byte, index) => frame[index] === byte)
    ? contiguousCodestream(frame, label)
    : frame;
  const shape = readSiz(codestream, label);
  checkShape(shape, layout, what);
  checkEndOfCodestream(codestream, label);

  const module = openJpeg();
  takeMessages('openjpeg');
  const decoder = new module.J2KDecoder();
  try {
    decoder.getEncodedBuffer(codestream.length).set(codestream);
    decoder.decode();
    const errors = takeMessages('openjpeg').filter((line) => line.startsWith('[ERROR]'));
    if (errors.length > 0) {
      discardInstance('openjpeg');
      refuse(
        400,
        'malformed',
        `${label}: its JPEG 2000 codestream cannot be decoded (the decoder reports: ` +
          `${quotable(errors[0].replace('[ERROR]', ''))}).`,
      );
    }
    const info = decoder.getFrameInfo();
    checkShape(
      {
        rows: info.height,
        columns: info.width,
        components: info.componentCount,
        precision: info.bitsPerSample,
        isSigned: info.isSigned,
      },
      layout,
      what,
    );
    if (info.bitsPerSample !== shape.precision || info.isSigned !== shape.isSigned) {
      refuse(
        400,
        'malformed',
        `${label}: its JPEG 2000 codestream decoded to another sample format than its SIZ marker states.`,
      );
    }
    const values = copyOut(decoder.getDecodedBuffer(), info.bitsPerSample, info.isSigned, layout);
    // The irreversible 9-7 wavelet always loses; the reversible 5-3 one is lossless only if
    // every bit-plane was kept, which the codestream does not record.
    return { values, isLossy: decoder.getIsReversible() ? null : true };
  } catch (error) {
    if (error instanceof InstanceRefusal) throw error;
    return failed(module, error, label);
  } finally {
    try {
      decoder.delete();
    } catch {
      // The instance is already discarded after a failure; nothing else to free.
    }
  }
}

function failed(module: OpenJpegModule, error: unknown, label: string): never {
  const message =
    cppExceptionMessage(module, error) ?? (error instanceof Error ? error.message : null);
  discardInstance('openjpeg');
  takeMessages('openjpeg');
  refuse(
    400,
    'malformed',
    `${label}: its JPEG 2000 codestream cannot be decoded` +
      (message ? ` (the decoder reports: ${quotable(message)}).` : '.'),
  );
}

/** 15444-1 A.5.1: SOC, then SIZ with the image and tile sizes and one Ssiz, XRsiz, YRsiz a component. */
export function readSiz(codestream: Uint8Array, label: string): CodestreamShape {
  const isSoc = codestream[0] === 0xff && codestream[1] === 0x4f;
  const isSiz = codestream[2] === 0xff && codestream[3] === 0x51;
  if (codestream.length < 4 || !isSoc || !isSiz) {
    refuse(
      400,
      'malformed',
      `${label}: its JPEG 2000 codestream does not open with the SOC and SIZ markers (FF4F FF51).`,
    );
  }
  const view = new DataView(codestream.buffer, codestream.byteOffset, codestream.byteLength);
  if (codestream.length < 42) {
    refuse(400, 'truncated', `${label}: its JPEG 2000 codestream ends inside its SIZ marker.`);
  }
  const lsiz = view.getUint16(4);
  const components = view.getUint16(40);
  if (lsiz !== 38 + 3 * components || components < 1) {
    refuse(400, 'malformed', `${label}: its JPEG 2000 SIZ marker has a wrong length.`);
  }
  if (codestream.length < 4 + lsiz) {
    refuse(400, 'truncated', `${label}: its JPEG 2000 codestream ends inside its SIZ marker.`);
  }
  const [xsiz, ysiz, xosiz, yosiz, xtsiz, ytsiz, xtosiz, ytosiz] = [
    8, 12, 16, 20, 24, 28, 32, 36,
  ].map((at) => view.getUint32(at));
  const tiles =
    xtsiz > 0 && ytsiz > 0
      ? Math.ceil((xsiz - xtosiz) / xtsiz) * Math.ceil((ysiz - ytosiz) / ytsiz)
      : 0;
  // A.5.1: the image and the first tile's origin lie within the reference grid; tiles cover it.
  const isGeometryValid =
    xsiz > xosiz &&
    ysiz > yosiz &&
    xtosiz <= xosiz &&
    ytosiz <= yosiz &&
    xtosiz + xtsiz > xosiz &&
    ytosiz + ytsiz > yosiz &&
    tiles >= 1 &&
    tiles <= maxTiles;
  if (!isGeometryValid) {
    refuse(
      400,
      'malformed',
      `${label}: its JPEG 2000 SIZ marker describes an impossible image or tiling.`,
    );
  }
  const ssiz = codestream[42];
  const isSubsampled = codestream[43] !== 1 || codestream[44] !== 1;
  if (isSubsampled) {
    refuse(
      415,
      'pixel-format',
      `${label}: its JPEG 2000 codestream subsamples its component; Emberline reads full-resolution greyscale only.`,
    );
  }
  return {
    columns: xsiz - xosiz,
    rows: ysiz - yosiz,
    components,
    precision: (ssiz & 0x7f) + 1,
    isSigned: (ssiz & 0x80) !== 0,
  };
}

/** The codestream ends with EOC (FFD9), save for zero padding: otherwise it was cut short. */
function checkEndOfCodestream(codestream: Uint8Array, label: string): void {
  let end = codestream.length;
  while (end > 0 && codestream[end - 1] === 0) end--;
  if (end < 2 || codestream[end - 2] !== 0xff || codestream[end - 1] !== 0xd9) {
    refuse(
      400,
      'truncated',
      `${label}: its JPEG 2000 codestream does not end with the EOC marker (FFD9); it was cut short.`,
    );
  }
}

/** The contiguous codestream box ('jp2c') of a JP2 file (15444-1 I.4, I.5.4). */
function contiguousCodestream(file: Uint8Array, label: string): Uint8Array {
  const view = new DataView(file.buffer, file.byteOffset, file.byteLength);
  let at = 0;
  while (at + 8 <= file.length) {
    let length = view.getUint32(at);
    const type = view.getUint32(at + 4);
    let header = 8;
    if (length === 1) {
      if (at + 16 > file.length) break;
      const high = view.getUint32(at + 8);
      length = high > 0 ? Infinity : view.getUint32(at + 12);
      header = 16;
    } else if (length === 0) {
      length = file.length - at;
    }
    if (length < header || at + length > file.length) break;
    if (type === 0x6a703263) return file.subarray(at + header, at + length); // 'jp2c'
    at += length;
  }
  refuse(
    400,
    'malformed',
    `${label}: its JPEG 2000 data is a JP2 file without a whole codestream box.`,
  );
}

function copyOut(
  decoded: Uint8Array,
  bitsPerSample: number,
  isSigned: boolean,
  layout: FrameLayout,
): Uint8Array | Uint16Array | Int16Array {
  const count = layout.rows * layout.columns;
  const bytesPerSample = bitsPerSample <= 8 ? 1 : 2;
  if (decoded.length !== count * bytesPerSample) {
    refuse(
      400,
      'malformed',
      `${layout.label}: its JPEG 2000 codestream decoded to ${decoded.length} bytes where ` +
        `${count} pixels need ${count * bytesPerSample}.`,
    );
  }
  if (bytesPerSample === 2) {
    return isSigned
      ? int16FromLittleEndian(decoded, count)
      : uint16FromLittleEndian(decoded, count);
  }
  if (layout.bitsAllocated === 8) return decoded.slice();
  // Samples of 8 bits or fewer come one a byte, even when Bits Allocated is 16.
  return isSigned
    ? Int16Array.from(new Int8Array(decoded.buffer, decoded.byteOffset, count))
    : Uint16Array.from(decoded);
}
