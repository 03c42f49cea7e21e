/**
 * The pixel-data codecs of compressed DICOM: the transfer syntaxes Emberline reads, the
 * splitting of encapsulated Pixel Data into frames, and the decoding of one frame. See README.md.
 */
export {
  transferSyntaxes,
  isJpegFamily,
  implicitVrLittleEndianUid,
  explicitVrLittleEndianUid,
  deflatedExplicitVrLittleEndianUid,
  explicitVrBigEndianUid,
  jpegLosslessUid,
  jpegLosslessFirstOrderUid,
  jpegLsLosslessUid,
  jpegLsNearLosslessUid,
  jpeg2000LosslessUid,
  jpeg2000Uid,
  rleLosslessUid,
  type TransferSyntax,
} from './transfer-syntaxes';
export type { DecodedFrame, FrameLayout } from './frame-layout';
export { encapsulatedFrames } from './encapsulated-frames';
export { decodeFrame } from './decode-frame';
export { initialiseCodecs, releaseCodecMemory, wasmMemoryBytes } from './wasm-codecs';
export { withExtendedOffsetTableReadable } from './extended-offset-table';
