import { lossyCompressionNote, type SeriesCompression } from '@emberline/shared';

const ratioFormat = new Intl.NumberFormat('en', { maximumFractionDigits: 1 });

/**
 * What a stored series says about its compression wherever it is shown: the lossy note, with
 * the ratio when the files recorded it ("… Compression ratio 10:1."), or '' for a series whose
 * pixels are not known to have gone through a lossy step.
 */
export function compressionNote(compression: SeriesCompression | null | undefined): string {
  if (!compression?.isLossy) return '';
  const ratio = compression.lossyRatio;
  if (ratio === null || !Number.isFinite(ratio) || ratio <= 0) return lossyCompressionNote;
  // DICOM PS3.3 C.7.6.1.1.5 (from memory) writes Lossy Image Compression Ratio as uncompressed
  // over compressed size (10 for 10:1). A value below 1 can only be the inverse quotient, so it is
  // turned round rather than shown as a compression that made the pixels larger.
  const uncompressedPerCompressed = ratio < 1 ? 1 / ratio : ratio;
  return `${lossyCompressionNote} Compression ratio ${ratioFormat.format(uncompressedPerCompressed)}:1.`;
}
