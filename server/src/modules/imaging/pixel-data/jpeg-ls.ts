/**
 * JPEG-LS (ITU-T T.87 | ISO/IEC 14495-1), transfer syntaxes 1.2.840.10008.1.2.4.80 (lossless)
 * and .81 (near-lossless), decoded by the CharLS WebAssembly build. The frame and scan headers
 * are read here first: the image must be the one the DICOM header describes before the decoder
 * allocates for it, and NEAR (the largest error the encoder allowed, T.87 A.2.1) says whether
 * the coding was lossy.
 */
import { InstanceRefusal } from '../dicom-instance-reader';
import { checkShape, type DecodedFrame, type FrameLayout } from './frame-layout';
import { hexByte, readJpegHeader } from './jpeg-markers';
import { uint16FromLittleEndian } from './little-endian';
import { quotable, refuse } from './refusal';
import { charls, cppExceptionMessage, discardInstance, type CharlsModule } from './wasm-codecs';

const what = 'JPEG-LS';

export function decodeJpegLs(frame: Uint8Array, layout: FrameLayout): DecodedFrame {
  const { label } = layout;
  const header = readJpegHeader(frame, what, label);
  if (header.sofMarker !== 0xf7) {
    refuse(
      415,
      'pixel-format',
      `${label}: its JPEG-LS codestream has frame marker FF${hexByte(header.sofMarker)}; ` +
        'Emberline decodes baseline JPEG-LS (SOF55, FFF7) only.',
    );
  }
  // T.87 C.2.2: P is 2 to 16 bits.
  if (header.precision < 2 || header.precision > 16) {
    refuse(
      400,
      'malformed',
      `${label}: its JPEG-LS codestream has precision ${header.precision}; JPEG-LS allows 2 to 16.`,
    );
  }
  checkShape({ ...header, isSigned: null }, layout, what);
  if (header.al !== 0) {
    refuse(
      415,
      'pixel-format',
      `${label}: its JPEG-LS codestream uses a point transform of ${header.al} bits; Emberline ` +
        'does not decode it.',
    );
  }
  const near = header.ss;
  const module = charls();
  const decoder = new module.JpegLSDecoder();
  try {
    decoder.getEncodedBuffer(frame.length).set(frame);
    decoder.decode();
    const info = decoder.getFrameInfo();
    checkShape(
      {
        rows: info.height,
        columns: info.width,
        components: info.componentCount,
        precision: info.bitsPerSample,
        isSigned: null,
      },
      layout,
      what,
    );
    if (decoder.getNearLossless() !== near) {
      refuse(400, 'malformed', `${label}: its JPEG-LS scans disagree on NEAR.`);
    }
    return {
      values: copyOut(decoder.getDecodedBuffer(), info.bitsPerSample, layout),
      isLossy: near > 0,
    };
  } catch (error) {
    if (error instanceof InstanceRefusal) throw error;
    return failed(module, error, label);
  } finally {
    deleteQuietly(decoder);
  }
}

function failed(module: CharlsModule, error: unknown, label: string): never {
  const message =
    cppExceptionMessage(module, error) ?? (error instanceof Error ? error.message : null);
  discardInstance('charls');
  refuse(
    400,
    'malformed',
    `${label}: its JPEG-LS codestream cannot be decoded` +
      (message ? ` (the decoder reports: ${quotable(message)}).` : '.'),
  );
}

/** Copies the pixels out of the WebAssembly heap (which the next decode reuses). */
function copyOut(decoded: Uint8Array, bitsPerSample: number, layout: FrameLayout) {
  const count = layout.rows * layout.columns;
  const bytesPerSample = bitsPerSample <= 8 ? 1 : 2;
  if (decoded.length !== count * bytesPerSample) {
    refuse(
      400,
      'malformed',
      `${layout.label}: its JPEG-LS codestream decoded to ${decoded.length} bytes where ` +
        `${count} pixels need ${count * bytesPerSample}.`,
    );
  }
  if (bytesPerSample === 1) {
    // Samples of 8 bits or fewer come one a byte, even when Bits Allocated is 16.
    return layout.bitsAllocated === 8 ? decoded.slice() : Uint16Array.from(decoded);
  }
  return uint16FromLittleEndian(decoded, count);
}

function deleteQuietly(decoder: { delete(): void }): void {
  try {
    decoder.delete();
  } catch {
    // The instance is already discarded after a failure; nothing else to free.
  }
}
