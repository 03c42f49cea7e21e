/**
 * The transfer syntaxes Emberline reads (DICOM PS3.5 section 10 and Annex A; names as in PS3.6
 * Table A-1, written from memory), with what each says about the pixels' history. Native
 * syntaxes carry the pixels as they are; encapsulated ones carry one compressed codestream a
 * frame in fragments (PS3.5 A.4), which `decodeFrame` decodes.
 */

export interface TransferSyntax {
  uid: string;
  /** Its name in DICOM PS3.6 Table A-1. */
  name: string;
  kind: 'native' | 'encapsulated';
  byteOrder: 'little' | 'big';
  /** The data set after the file meta is deflated (RFC 1951), PS3.5 A.5. */
  isDeflated: boolean;
  /**
   * What the syntax alone says. 'depends': the syntax allows both, and the codestream
   * (`DecodedFrame.isLossy`) or Lossy Image Compression (0028,2110) tells: JPEG-LS
   * near-lossless with NEAR 0 is lossless, and JPEG 2000 may be reversible.
   */
  loss: 'lossless' | 'lossy' | 'depends';
  /** The defined term of Lossy Image Compression Method (0028,2114) when the pixels went lossy. */
  lossyMethod: string | null;
}

function native(
  uid: string,
  name: string,
  byteOrder: 'little' | 'big',
  isDeflated = false,
): TransferSyntax {
  return { uid, name, kind: 'native', byteOrder, isDeflated, loss: 'lossless', lossyMethod: null };
}

function encapsulated(
  uid: string,
  name: string,
  loss: TransferSyntax['loss'],
  lossyMethod: string | null = null,
): TransferSyntax {
  return {
    uid,
    name,
    kind: 'encapsulated',
    byteOrder: 'little',
    isDeflated: false,
    loss,
    lossyMethod,
  };
}

export const implicitVrLittleEndianUid = '1.2.840.10008.1.2';
export const explicitVrLittleEndianUid = '1.2.840.10008.1.2.1';
export const deflatedExplicitVrLittleEndianUid = '1.2.840.10008.1.2.1.99';
export const explicitVrBigEndianUid = '1.2.840.10008.1.2.2';
export const jpegLosslessUid = '1.2.840.10008.1.2.4.57';
export const jpegLosslessFirstOrderUid = '1.2.840.10008.1.2.4.70';
export const jpegLsLosslessUid = '1.2.840.10008.1.2.4.80';
export const jpegLsNearLosslessUid = '1.2.840.10008.1.2.4.81';
export const jpeg2000LosslessUid = '1.2.840.10008.1.2.4.90';
export const jpeg2000Uid = '1.2.840.10008.1.2.4.91';
export const rleLosslessUid = '1.2.840.10008.1.2.5';

const all: TransferSyntax[] = [
  native(implicitVrLittleEndianUid, 'Implicit VR Little Endian', 'little'),
  native(explicitVrLittleEndianUid, 'Explicit VR Little Endian', 'little'),
  native(deflatedExplicitVrLittleEndianUid, 'Deflated Explicit VR Little Endian', 'little', true),
  // Retired from the standard (PS3.5 2004 onwards) but still found in archives.
  native(explicitVrBigEndianUid, 'Explicit VR Big Endian', 'big'),
  encapsulated(jpegLosslessUid, 'JPEG Lossless, Non-Hierarchical (Process 14)', 'lossless'),
  encapsulated(
    jpegLosslessFirstOrderUid,
    'JPEG Lossless, Non-Hierarchical, First-Order Prediction (Process 14 [Selection Value 1])',
    'lossless',
  ),
  encapsulated(jpegLsLosslessUid, 'JPEG-LS Lossless Image Compression', 'lossless'),
  encapsulated(
    jpegLsNearLosslessUid,
    'JPEG-LS Lossy (Near-Lossless) Image Compression',
    'depends',
    'ISO_14495_1',
  ),
  encapsulated(jpeg2000LosslessUid, 'JPEG 2000 Image Compression (Lossless Only)', 'lossless'),
  encapsulated(jpeg2000Uid, 'JPEG 2000 Image Compression', 'depends', 'ISO_15444_1'),
  encapsulated(rleLosslessUid, 'RLE Lossless', 'lossless'),
];

/** Transfer Syntax UID → what Emberline knows of it; a UID not here is not read. */
export const transferSyntaxes: ReadonlyMap<string, TransferSyntax> = new Map(
  all.map((syntax) => [syntax.uid, Object.freeze(syntax)]),
);

/** The JPEG family (ITU-T T.81 and ISO/IEC 14495-1): codestreams open with SOI, FFD8. */
export function isJpegFamily(uid: string): boolean {
  return [
    jpegLosslessUid,
    jpegLosslessFirstOrderUid,
    jpegLsLosslessUid,
    jpegLsNearLosslessUid,
  ].includes(uid);
}
