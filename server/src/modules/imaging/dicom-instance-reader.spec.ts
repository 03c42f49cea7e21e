/**
 * The reader on the compressed reference files (`test/support/compressed-dicom.ts`: dcmtk and
 * opj_compress applied to the invented CT): every single-frame file scans as an image whose
 * transfer syntax is the one the tool wrote, and decodes to the stored values of the
 * uncompressed original (lossless syntaxes), with the rescale applied; a file with an Extended
 * Offset Table (7FE0,0001), VR OV, which dicom-parser cannot read as such, still parses.
 */
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { compressedDicomSet, originalValues } from '../../../../test/support/compressed-dicom';
import { decodeInstance, scanInstance, type InstanceReadLimits } from './dicom-instance-reader';
import { initialiseCodecs } from './pixel-data';

const limits: InstanceReadLimits = {
  maxSequenceDepth: 12,
  maxAttributes: 100_000,
  maxInstanceBytes: 64 * 1_048_576,
  maxDecodedBytes: 1024 * 1_048_576,
};

beforeAll(async () => {
  await initialiseCodecs();
});

describe('the reader on the dcmtk and opj_compress reference files', () => {
  const set = compressedDicomSet();
  const lossless = set.files.filter(
    (file) => file.frames.length === 1 && !file.near && !file.isIrreversible && !file.ratio,
  );

  it.each(lossless.map((file) => [file.name, file] as const))(
    '%s decodes to the original stored values, rescaled',
    (_name, file) => {
      const bytes = new Uint8Array(readFileSync(file.path));
      const { scanned, decoded } = decodeInstance(bytes, 'File 1', limits);
      expect(scanned.transferSyntaxUid).toBe(file.transferSyntaxUid);
      const original = originalValues(set.variants[file.variant].slices[file.frames[0]]);
      const { slope, intercept } = scanned.frames[0].rescale;
      const [frame] = decoded.frames;
      expect(frame).toHaveLength(original.length);
      let differing = 0;
      for (let index = 0; index < original.length; index++) {
        if (frame[index] !== Math.round(original[index] * slope + intercept)) differing += 1;
      }
      expect(differing).toBe(0);
    },
  );

  it('parses a file with an Extended Offset Table (VR OV) and reads its frames from the table', () => {
    const file = set.files.find(
      (entry) => entry.encapsulation === 'one fragment, Extended Offset Table',
    );
    if (!file) throw new Error('the reference set has no Extended Offset Table file');
    const scanned = scanInstance(new Uint8Array(readFileSync(file.path)), 'File 1', limits);
    // Several frames of CT Image Storage: read, then set aside as not an Enhanced image.
    expect(scanned).toMatchObject({ kind: 'other', what: 'Multi-frame image' });
  });
});
