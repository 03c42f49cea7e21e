import { describe, expect, it } from 'vitest';
import {
  ctImageStorage,
  encodeDirectory,
  imageRecords,
  recordPatientId,
  recordPatientName,
  seriesRecords,
  setUint32,
  type RecordSpec,
} from '../../../../test/integration/dicomdir-writer';
import { InstanceRefusal } from './dicom-instance-reader';
import { readMediaDirectory } from './dicom-directory';
import type { RefusalPayload } from './imaging-refusal';

// The layout under test, from memory: the Basic Directory IOD (DICOM PS3.3 F.5) links its
// records by byte offsets counted from the first byte of the file, preamble included (PS3.3
// F.3.2.1); (0004,1400) is the next record of the same entity, (0004,1420) the first record of
// the entity below, 0 for none. test/integration/imaging-dicomdir.spec.ts checks the same
// reader against DICOMDIRs made by dcmtk's dcmmkdir.

const limits = { maxRecords: 100 };

function refusalOf(read: () => unknown): RefusalPayload {
  try {
    read();
  } catch (error) {
    if (error instanceof InstanceRefusal) return error.payload;
    throw error;
  }
  throw new Error('expected a refusal');
}

const path = (fileId: string[]) => fileId.join('/');

describe('readMediaDirectory (DICOM PS3.10 section 8, PS3.3 F.5)', () => {
  it('walks PATIENT → STUDY → SERIES → IMAGE and answers the files in the directory order', () => {
    // Two studies of one patient, the second with two series: the order is depth first.
    const roots: RecordSpec[] = [
      {
        type: 'PATIENT',
        children: [
          { type: 'STUDY', children: [{ type: 'SERIES', children: imageRecords(2, 'SE000001') }] },
          {
            type: 'STUDY',
            children: [
              { type: 'SERIES', children: imageRecords(1, 'SE000002') },
              { type: 'SERIES', children: imageRecords(3, 'SE000003') },
            ],
          },
        ],
      },
    ];
    const { bytes } = encodeDirectory(roots);
    const directory = readMediaDirectory(bytes, 'File 1 (DICOMDIR)', limits);
    expect(directory.counts).toEqual({
      patientCount: 1,
      studyCount: 2,
      seriesCount: 3,
      imageCount: 6,
    });
    expect(directory.references.map((reference) => path(reference.fileId))).toEqual([
      'DICOM/ST000001/SE000001/IM000001',
      'DICOM/ST000001/SE000001/IM000002',
      'DICOM/ST000001/SE000002/IM000001',
      'DICOM/ST000001/SE000003/IM000001',
      'DICOM/ST000001/SE000003/IM000002',
      'DICOM/ST000001/SE000003/IM000003',
    ]);
    expect(directory.references.every((reference) => reference.recordType === 'IMAGE')).toBe(true);
  });

  it('follows the links, not the order of the items in the sequence', () => {
    const inOrder = readMediaDirectory(encodeDirectory(seriesRecords(4)).bytes, 'a', limits);
    const reversed = encodeDirectory(seriesRecords(4), { isReversed: true });
    // The items really lie the other way round: the first record is the last item.
    expect(reversed.records[0].offset).toBeGreaterThan(reversed.records[4].offset);
    expect(readMediaDirectory(reversed.bytes, 'b', limits)).toEqual(inOrder);
  });

  it('leaves out a record not in use (Record In-use Flag 0000H) and the entity below it', () => {
    const roots = seriesRecords(3);
    const series = roots[0].children?.[0].children?.[0];
    if (!series?.children) throw new Error('fixture');
    series.children[1].inUse = false;
    const directory = readMediaDirectory(encodeDirectory(roots).bytes, 'a', limits);
    expect(directory.references.map((reference) => path(reference.fileId))).toEqual([
      'DICOM/ST000001/SE000001/IM000001',
      'DICOM/ST000001/SE000001/IM000003',
    ]);
    expect(directory.counts.imageCount).toBe(2);
  });

  it('answers the files of records other than IMAGE with their record type', () => {
    const roots = seriesRecords(1);
    roots[0].children?.[0].children?.push({
      type: 'SR DOCUMENT',
      children: [],
      fileId: ['DICOM', 'ST000001', 'SR000001'],
    });
    const directory = readMediaDirectory(encodeDirectory(roots).bytes, 'a', limits);
    expect(directory.references).toEqual([
      { fileId: ['DICOM', 'ST000001', 'SE000001', 'IM000001'], recordType: 'IMAGE' },
      { fileId: ['DICOM', 'ST000001', 'SR000001'], recordType: 'SR DOCUMENT' },
    ]);
  });

  it('answers nothing of the patient record', () => {
    const directory = readMediaDirectory(encodeDirectory(seriesRecords(2)).bytes, 'a', limits);
    const text = JSON.stringify(directory);
    expect(text).not.toContain('QXDIR');
    expect(text).not.toContain(recordPatientId);
    expect(text).not.toContain(recordPatientName.split('^')[0]);
  });

  it('refuses a loop of next-record links as a damaged DICOMDIR', () => {
    const encoded = encodeDirectory(seriesRecords(3));
    // The last image (record 5) points back to the first (record 3).
    setUint32(encoded.bytes, encoded.records[5].nextAt, encoded.records[3].offset);
    const refusal = refusalOf(() => readMediaDirectory(encoded.bytes, 'File 2 (DICOMDIR)', limits));
    expect(refusal).toMatchObject({ status: 400, reason: 'dicomdir' });
    expect(refusal.detail).toMatch(/^File 2 \(DICOMDIR\) is a damaged DICOMDIR: .*loop/);
  });

  it('refuses a lower-level link back to an ancestor, and one record linked twice', () => {
    const up = encodeDirectory(seriesRecords(2));
    // The series (record 2) names the patient (record 0) as its lower level.
    setUint32(up.bytes, up.records[2].lowerAt, up.records[0].offset);
    expect(refusalOf(() => readMediaDirectory(up.bytes, 'a', limits)).detail).toMatch(/loop/);
    const twice = encodeDirectory(seriesRecords(2));
    // The study's next sibling is its own series: reached twice without a cycle of its own.
    setUint32(twice.bytes, twice.records[1].nextAt, twice.records[2].offset);
    expect(refusalOf(() => readMediaDirectory(twice.bytes, 'a', limits)).reason).toBe('dicomdir');
  });

  it('refuses a link to where no record starts', () => {
    const encoded = encodeDirectory(seriesRecords(2));
    setUint32(encoded.bytes, encoded.records[3].nextAt, encoded.records[3].offset + 2);
    expect(refusalOf(() => readMediaDirectory(encoded.bytes, 'a', limits)).detail).toMatch(
      /points to byte \d+, where no directory record starts/,
    );
    const root = encodeDirectory(seriesRecords(2));
    setUint32(root.bytes, root.rootAt, 0x7fffffff);
    expect(refusalOf(() => readMediaDirectory(root.bytes, 'a', limits)).reason).toBe('dicomdir');
  });

  it('refuses more records than the limit with 413', () => {
    const refusal = refusalOf(() =>
      readMediaDirectory(encodeDirectory(seriesRecords(20)).bytes, 'a', { maxRecords: 10 }),
    );
    expect(refusal).toMatchObject({ status: 413, reason: 'dicomdir' });
    expect(refusal.detail).toMatch(/holds 23 directory records; .* at most 10/);
  });

  it('refuses a Referenced File ID that leaves the folder of the DICOMDIR', () => {
    for (const fileId of [
      ['..', 'OTHER', 'IM000001'],
      ['DICOM', '.', 'IM000001'],
      ['C:', 'IM000001'],
      ['DICOM', 'A/B'],
    ]) {
      const encoded = encodeDirectory([{ type: 'PATIENT', children: [{ type: 'IMAGE', fileId }] }]);
      expect(refusalOf(() => readMediaDirectory(encoded.bytes, 'a', limits)).detail).toMatch(
        /Referenced File ID \(0004,1500\) is not a path within the folder/,
      );
    }
  });

  it('refuses a file named DICOMDIR that is another kind of DICOM file', () => {
    const encoded = encodeDirectory(seriesRecords(1), { sopClassUid: ctImageStorage });
    const refusal = refusalOf(() => readMediaDirectory(encoded.bytes, 'File 1 (DICOMDIR)', limits));
    expect(refusal).toMatchObject({ status: 400, reason: 'dicomdir' });
    expect(refusal.detail).toMatch(
      /is named DICOMDIR but is not a media directory: .* is 1\.2\.840\.10008\.5\.1\.4\.1\.1\.2, not 1\.2\.840\.10008\.1\.3\.10/,
    );
  });

  it('refuses a truncated DICOMDIR', () => {
    const { bytes } = encodeDirectory(seriesRecords(3));
    for (const length of [bytes.length - 30, 400]) {
      const refusal = refusalOf(() => readMediaDirectory(bytes.subarray(0, length), 'a', limits));
      expect(refusal).toMatchObject({ status: 400, reason: 'dicomdir' });
      expect(refusal.detail).toBe('a is a truncated DICOMDIR: it ends inside an attribute.');
    }
  });
});
