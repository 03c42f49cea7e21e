/** Decodes one compressed frame with the codec its transfer syntax names. */
import { InstanceRefusal } from '../dicom-instance-reader';
import type { DecodedFrame, FrameLayout } from './frame-layout';
import { decodeJpeg2000 } from './jpeg-2000';
import { decodeJpegLossless } from './jpeg-lossless';
import { decodeJpegLs } from './jpeg-ls';
import { quotable, refuse } from './refusal';
import { decodeRle } from './rle';
import {
  jpeg2000LosslessUid,
  jpeg2000Uid,
  jpegLosslessFirstOrderUid,
  jpegLosslessUid,
  jpegLsLosslessUid,
  jpegLsNearLosslessUid,
  rleLosslessUid,
  type TransferSyntax,
} from './transfer-syntaxes';
import { assertInitialised } from './wasm-codecs';

const decoders: Record<string, (frame: Uint8Array, layout: FrameLayout) => DecodedFrame> = {
  [jpegLosslessUid]: decodeJpegLossless,
  [jpegLosslessFirstOrderUid]: decodeJpegLossless,
  [jpegLsLosslessUid]: decodeJpegLs,
  [jpegLsNearLosslessUid]: decodeJpegLs,
  [jpeg2000LosslessUid]: decodeJpeg2000,
  [jpeg2000Uid]: decodeJpeg2000,
  [rleLosslessUid]: decodeRle,
};

/**
 * Decodes one compressed frame and checks it is the image `layout` describes. Damaged input
 * ends in an InstanceRefusal (400 malformed or truncated, 415 pixel-format) naming
 * `layout.label`; a plain Error means a programming error (codecs not initialised, a native
 * syntax passed).
 */
export function decodeFrame(
  syntax: TransferSyntax,
  frame: Uint8Array,
  layout: FrameLayout,
): DecodedFrame {
  assertInitialised();
  const decode = decoders[syntax.uid];
  if (!decode) {
    throw new Error(`decodeFrame has no codec for the transfer syntax ${syntax.uid}.`);
  }
  const count = layout.rows * layout.columns;
  if (!Number.isInteger(count) || count < 1 || ![8, 16].includes(layout.bitsAllocated)) {
    throw new Error('decodeFrame needs positive rows and columns and 8 or 16 bits allocated.');
  }
  if (frame.length === 0) {
    refuse(400, 'truncated', `${layout.label}: its compressed frame is empty.`);
  }
  let decoded: DecodedFrame;
  try {
    decoded = decode(frame, layout);
  } catch (error) {
    if (error instanceof InstanceRefusal) throw error;
    // Whatever a codec throws on damaged data (a JavaScript decoder's TypeError or
    // RangeError included) is the data's fault, and is reported as such.
    refuse(
      400,
      'malformed',
      `${layout.label}: its ${syntax.name} data cannot be decoded ` +
        `(${quotable(error instanceof Error ? error.message : String(error))}).`,
    );
  }
  if (decoded.values.length !== count) {
    refuse(
      400,
      'malformed',
      `${layout.label}: its ${syntax.name} data decoded to ${decoded.values.length} pixels, ` +
        `not the ${count} of ${layout.rows} rows × ${layout.columns} columns.`,
    );
  }
  return decoded;
}
