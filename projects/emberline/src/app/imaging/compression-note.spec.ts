import { lossyCompressionNote, type SeriesCompression } from '@emberline/shared';
import { compressionNote } from './compression-note';

/**
 * Transfer syntaxes from DICOM PS3.6 Table A-1, from memory [M]: 1.2.840.10008.1.2.1 Explicit VR
 * Little Endian (not compressed); 1.2.840.10008.1.2.4.91 JPEG 2000 Image Compression (may be
 * lossy). Lossy Image Compression Ratio (0028,2112), PS3.3 C.7.6.1.1.5, from memory [M]: the
 * uncompressed size over the compressed one, 10 for 10:1.
 */
function compression(fields: Partial<SeriesCompression>): SeriesCompression {
  return {
    transferSyntaxUid: '1.2.840.10008.1.2.4.91',
    transferSyntaxName: 'JPEG 2000 Image Compression',
    isLossy: true,
    lossyRatio: null,
    lossyMethod: 'ISO_15444_1',
    ...fields,
  };
}

describe('compressionNote', () => {
  it('says nothing for a series without a lossy step, or stored before it was recorded', () => {
    const plain = compression({
      transferSyntaxUid: '1.2.840.10008.1.2.1',
      transferSyntaxName: 'Explicit VR Little Endian',
      isLossy: false,
      lossyMethod: null,
    });
    expect(compressionNote(plain)).toBe('');
    expect(compressionNote(null)).toBe('');
    expect(compressionNote(undefined)).toBe('');
  });

  it('gives the lossy note alone when the ratio is not known', () => {
    expect(compressionNote(compression({}))).toBe(lossyCompressionNote);
  });

  it('adds the ratio as uncompressed to compressed, to one decimal', () => {
    expect(compressionNote(compression({ lossyRatio: 10 }))).toBe(
      `${lossyCompressionNote} Compression ratio 10:1.`,
    );
    expect(compressionNote(compression({ lossyRatio: 12.46 }))).toBe(
      `${lossyCompressionNote} Compression ratio 12.5:1.`,
    );
  });

  it('reads a ratio below 1 as compressed over uncompressed and turns it round', () => {
    // [C] 1 / 0.1 = 10.
    expect(compressionNote(compression({ lossyRatio: 0.1 }))).toBe(
      `${lossyCompressionNote} Compression ratio 10:1.`,
    );
  });
});
