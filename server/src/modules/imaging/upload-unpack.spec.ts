import { zipSync } from 'fflate';
import { describe, expect, it } from 'vitest';
import {
  encodeDirectory,
  part10Stub,
  recordPatientId,
  seriesRecords,
  setUint32,
  type RecordSpec,
} from '../../../../test/integration/dicomdir-writer';
import { InstanceRefusal } from './dicom-instance-reader';
import type { RefusalPayload } from './imaging-refusal';
import { unpackUpload, type UnpackLimits, type UploadedFile } from './upload-unpack';

// What makes a file DICOM, from memory: the 128-byte preamble and "DICM" (DICOM PS3.10 7.1).
// A DICOMDIR (PS3.10 section 8, the Basic Directory IOD of PS3.3 F.5) names its files by
// Referenced File ID (0004,1500), relative to its own folder; `dicomdir-writer.ts` writes the
// directories here, and test/integration/imaging-dicomdir.spec.ts checks against dcmmkdir's.

const kibibyte = 1024;
const limits: UnpackLimits = {
  maxFiles: 20,
  maxInstanceBytes: 64 * kibibyte,
  maxInflatedBytes: 256 * kibibyte,
};

const text = (value: string) => new TextEncoder().encode(value);
const file = (name: string, bytes: Uint8Array): UploadedFile => ({ name, bytes });

function refusalOf(unpack: () => unknown): RefusalPayload {
  try {
    unpack();
  } catch (error) {
    if (error instanceof InstanceRefusal) return error.payload;
    throw error;
  }
  throw new Error('expected a refusal');
}

/** A folder as export media lay it out: DICOMDIR beside DICOM/ST000001/SE000001/IMnnnnnn. */
function mediaFolder(
  count: number,
  root = 'EXPORT',
): { files: UploadedFile[]; images: Uint8Array[] } {
  const images = Array.from({ length: count }, () => part10Stub());
  const files = [
    file(`${root}/DICOMDIR`, encodeDirectory(seriesRecords(count)).bytes),
    ...images.map((bytes, index) =>
      file(`${root}/DICOM/ST000001/SE000001/IM${String(index + 1).padStart(6, '0')}`, bytes),
    ),
  ];
  return { files, images };
}

describe('unpackUpload: files recognised by their content (DICOM PS3.10 7.1)', () => {
  it('reads extensionless DICOM files, naming them by place and base name', () => {
    const images = [part10Stub(), part10Stub()];
    const result = unpackUpload(
      [file('IM000001', images[0]), file('SCANS/IM000002', images[1])],
      limits,
    );
    expect(result.entries).toEqual([
      { label: 'File 1 (IM000001)', path: 'IM000001', bytes: images[0] },
      { label: 'File 2 (IM000002)', path: 'SCANS/IM000002', bytes: images[1] },
    ]);
    expect(result).toMatchObject({ skippedCount: 0, skipped: [] });
    expect(result.directory).toBeUndefined();
  });

  it('lists the companions of export media as skipped instead of refusing the upload', () => {
    const image = part10Stub();
    const result = unpackUpload(
      [
        file('CD/README.TXT', text('Open the viewer to see the images.\r\n')),
        file('CD/AUTORUN.INF', text('[autorun]\r\nopen=VIEWER.EXE\r\n')),
        file('CD/index.htm', text('<html><body>Images</body></html>')),
        file('CD/VIEWER.EXE', Uint8Array.from([0x4d, 0x5a, ...new Array<number>(300).fill(0)])),
        file('CD/IMAGES/IM1', image),
        file('CD/EMPTY', new Uint8Array(0)),
        file('CD/.DS_Store', text('x')),
        file('__MACOSX/CD/._IM1', text('x')),
      ],
      limits,
    );
    expect(result.entries.map((entry) => entry.label)).toEqual(['File 5 (IM1)']);
    expect(result.skippedCount).toBe(7);
    expect(result.skipped).toEqual([
      { description: '.DS_Store', reason: 'hidden file or archiver metadata' },
      { description: '._IM1', reason: 'hidden file or archiver metadata' },
      { description: 'README.TXT', reason: 'not a DICOM file' },
      { description: 'AUTORUN.INF', reason: 'not a DICOM file' },
      { description: 'index.htm', reason: 'not a DICOM file' },
      { description: 'VIEWER.EXE', reason: 'not a DICOM file' },
      { description: 'EMPTY', reason: 'empty file' },
    ]);
  });

  it('lists at most 200 skipped files one by one, then counts the rest in one line', () => {
    const notes = Array.from({ length: 250 }, (_, index) => file(`NOTE${index}.TXT`, text('x')));
    const result = unpackUpload([file('IM1', part10Stub()), ...notes], {
      ...limits,
      maxFiles: 300,
    });
    expect(result.skippedCount).toBe(250);
    expect(result.skipped).toHaveLength(201);
    expect(result.skipped[199]).toEqual({ description: 'NOTE199.TXT', reason: 'not a DICOM file' });
    expect(result.skipped[200]).toEqual({
      description: '50 more files',
      reason: 'not read; the listing stops at 200',
    });
  });

  it('refuses an upload in which no file is DICOM (415), or every file is empty (400)', () => {
    const several = refusalOf(() =>
      unpackUpload([file('notes.txt', text('a list')), file('photo', new Uint8Array(200))], limits),
    );
    expect(several).toEqual({
      status: 415,
      reason: 'not-dicom',
      detail:
        'None of the 2 files the upload holds is a DICOM file: none has the "DICM" marker after ' +
        'the 128-byte preamble (DICOM PS3.10 7.1). Send the DICOM files of one series, or one ' +
        '.zip of them.',
    });
    const one = refusalOf(() => unpackUpload([file('scan', new Uint8Array(300))], limits));
    expect(one.detail).toMatch(/^The one file the upload holds is not a DICOM file: it lacks/);
    expect(refusalOf(() => unpackUpload([file('a', new Uint8Array(0))], limits))).toMatchObject({
      status: 400,
      reason: 'no-files',
    });
  });

  it('refuses a file named .dcm without the marker rather than leaving a slice out', () => {
    const refusal = refusalOf(() =>
      unpackUpload([file('s1.dcm', part10Stub()), file('s2.dcm', new Uint8Array(400))], limits),
    );
    expect(refusal).toEqual({
      status: 415,
      reason: 'not-dicom',
      detail:
        'File 2 (s2.dcm) is not a DICOM file: it lacks the "DICM" marker after the 128-byte ' +
        'preamble (DICOM PS3.10 7.1).',
    });
  });

  it('reduces a quoted name to [\\w.-], at most 40 characters', () => {
    const [entry] = unpackUpload([file('Ça va/slice <1> "a".dcm', part10Stub())], limits).entries;
    expect(entry.label).toBe('File 1 (slice1a.dcm)');
    expect(unpackUpload([file('b'.repeat(60), part10Stub())], limits).entries[0].label).toBe(
      `File 1 (${'b'.repeat(40)})`,
    );
    expect(unpackUpload([file('Ω', part10Stub())], limits).entries[0].label).toBe('File 1');
  });

  it('keeps the limits: files in an upload, bytes of a file, a .zip alone', () => {
    const many = Array.from({ length: 21 }, (_, index) => file(`IM${index}`, part10Stub()));
    expect(refusalOf(() => unpackUpload(many, limits))).toEqual({
      status: 413,
      reason: 'too-many-files',
      detail: 'The upload holds 21 files; it may hold at most 20.',
    });
    const large = refusalOf(() =>
      unpackUpload([file('IM1', new Uint8Array(64 * kibibyte + 1))], limits),
    );
    expect(large).toEqual({
      status: 413,
      reason: 'too-large',
      detail: 'File 1 (IM1) is 0.1 MB; one DICOM file may be at most 0.1 MB.',
    });
    const zipAmongFiles = refusalOf(() =>
      unpackUpload(
        [file('IM1', part10Stub()), file('a.zip', zipSync({ a: part10Stub() }))],
        limits,
      ),
    );
    expect(zipAmongFiles).toMatchObject({ status: 400, reason: 'zip' });
    expect(zipAmongFiles.detail).toBe(
      'File 2 (a.zip) is a .zip among 2 files; send one .zip alone, or DICOM files without a .zip.',
    );
  });
});

describe('unpackUpload: a DICOMDIR decides what is read (DICOM PS3.10 section 8)', () => {
  it('reads exactly the files the DICOMDIR names, in its order, whatever the upload order', () => {
    const { files, images } = mediaFolder(4);
    const result = unpackUpload([...files].reverse(), limits);
    expect(result.entries.map((entry) => entry.path)).toEqual([
      'EXPORT/DICOM/ST000001/SE000001/IM000001',
      'EXPORT/DICOM/ST000001/SE000001/IM000002',
      'EXPORT/DICOM/ST000001/SE000001/IM000003',
      'EXPORT/DICOM/ST000001/SE000001/IM000004',
    ]);
    expect(result.entries.map((entry) => entry.bytes)).toEqual(images);
    // Labels keep the place in the upload: the reversed upload sent IM000001 fourth.
    expect(result.entries[0].label).toBe('File 4 (IM000001)');
    expect(result.directory).toEqual({
      patientCount: 1,
      studyCount: 1,
      seriesCount: 1,
      imageCount: 4,
    });
    expect(result.skipped).toEqual([
      { description: 'DICOMDIR', reason: 'media directory: read for its records' },
    ]);
    expect(result.skippedCount).toBe(1);
  });

  it('matches File IDs without regard to case, and folder uploads with or without a top folder', () => {
    for (const root of ['export', '']) {
      const { files } = mediaFolder(2, root);
      const lowered = files.map((entry) => ({
        ...entry,
        name: entry.name.replace(/DICOM\//, 'dicom/').replace(/IM0/, 'im0'),
      }));
      const result = unpackUpload(lowered, limits);
      expect(result.entries.map((entry) => entry.path.toUpperCase())).toEqual([
        `${root ? 'EXPORT/' : ''}DICOM/ST000001/SE000001/IM000001`,
        `${root ? 'EXPORT/' : ''}DICOM/ST000001/SE000001/IM000002`,
      ]);
    }
  });

  it('skips what the DICOMDIR does not name, unread, even over the size of one file', () => {
    const { files } = mediaFolder(2);
    const result = unpackUpload(
      [
        ...files,
        file('EXPORT/README.TXT', text('Viewer inside.')),
        file('EXPORT/VIEWER/VIEWER.EXE', new Uint8Array(200 * kibibyte)),
        file('EXPORT/DICOM/ST000001/SE000009/IM000001', part10Stub()),
      ],
      limits,
    );
    expect(result.entries).toHaveLength(2);
    expect(result.skipped).toEqual([
      { description: 'DICOMDIR', reason: 'media directory: read for its records' },
      { description: 'README.TXT', reason: 'not named by the DICOMDIR' },
      { description: 'VIEWER.EXE', reason: 'not named by the DICOMDIR' },
      { description: 'IM000001', reason: 'not named by the DICOMDIR' },
    ]);
    expect(result.skippedCount).toBe(4);
  });

  it('lists the named files that were not sent, and refuses when none was', () => {
    const { files } = mediaFolder(5);
    const some = unpackUpload(
      files.filter((_, index) => index !== 2 && index !== 4),
      limits,
    );
    expect(some.entries.map((entry) => entry.path.slice(-8))).toEqual([
      'IM000001',
      'IM000003',
      'IM000005',
    ]);
    expect(some.skipped).toContainEqual({
      description: '2 image files named by the DICOMDIR',
      reason: 'not in the upload',
    });
    expect(some.skippedCount).toBe(1);
    // A browser that dropped the folders: every path is a base name, nothing resolves.
    const flattened = files.map((entry) => ({
      ...entry,
      name: entry.name.split('/').at(-1) ?? '',
    }));
    expect(refusalOf(() => unpackUpload(flattened, limits))).toEqual({
      status: 400,
      reason: 'dicomdir',
      detail:
        'None of the 5 image files the DICOMDIR names is in the upload: send the folder that ' +
        'holds the DICOMDIR with all its subfolders, or a .zip of it.',
    });
  });

  it('skips the files of records that are not images, with their record type', () => {
    const roots: RecordSpec[] = seriesRecords(1);
    roots[0].children?.[0].children?.push({
      type: 'SR DOCUMENT',
      fileId: ['DICOM', 'ST000001', 'SR000001'],
    });
    const result = unpackUpload(
      [
        file('DICOMDIR', encodeDirectory(roots).bytes),
        file('DICOM/ST000001/SE000001/IM000001', part10Stub()),
        file('DICOM/ST000001/SR000001', part10Stub()),
      ],
      limits,
    );
    expect(result.entries.map((entry) => entry.path)).toEqual(['DICOM/ST000001/SE000001/IM000001']);
    expect(result.skipped).toContainEqual({
      description: 'SR000001',
      reason: 'a SR DOCUMENT record of the DICOMDIR',
    });
  });

  it('refuses a DICOMDIR that names no image, and an image it names that is empty', () => {
    const noImages = encodeDirectory([{ type: 'PATIENT', children: [{ type: 'STUDY' }] }]);
    expect(
      refusalOf(() =>
        unpackUpload([file('DICOMDIR', noImages.bytes), file('IM1', part10Stub())], limits),
      ),
    ).toMatchObject({
      status: 400,
      reason: 'dicomdir',
      detail: expect.stringMatching(/names no image/),
    });
    const { files } = mediaFolder(2);
    files[2] = { ...files[2], bytes: new Uint8Array(0) };
    expect(refusalOf(() => unpackUpload(files, limits))).toEqual({
      status: 400,
      reason: 'truncated',
      detail: 'File 3 (IM000002) is empty, though the DICOMDIR names it as an image.',
    });
  });

  it('refuses a damaged DICOMDIR clearly (a loop of links), naming the file', () => {
    const { files } = mediaFolder(3);
    const encoded = encodeDirectory(seriesRecords(3));
    setUint32(encoded.bytes, encoded.records[4].nextAt, encoded.records[3].offset);
    files[0] = { ...files[0], bytes: encoded.bytes };
    const refusal = refusalOf(() => unpackUpload(files, limits));
    expect(refusal).toMatchObject({ status: 400, reason: 'dicomdir' });
    expect(refusal.detail).toMatch(/^File 1 \(DICOMDIR\) is a damaged DICOMDIR: .*loop/);
  });

  it('refuses a DICOMDIR with more records than the upload could ever need (413)', () => {
    const small: UnpackLimits = { ...limits, maxFiles: 1 };
    const encoded = encodeDirectory(seriesRecords(80));
    const refusal = refusalOf(() =>
      unpackUpload([file('DICOMDIR', encoded.bytes)], { ...small, maxInstanceBytes: 1 << 20 }),
    );
    expect(refusal).toMatchObject({ status: 413, reason: 'dicomdir' });
    expect(refusal.detail).toMatch(/holds 83 directory records; .* at most 80\./);
  });

  it('treats a file named DICOMDIR without the marker as a companion, not a directory', () => {
    const images = [part10Stub(), part10Stub()];
    const result = unpackUpload(
      [file('DICOMDIR', new Uint8Array(200)), file('A/IM1', images[0]), file('A/IM2', images[1])],
      limits,
    );
    expect(result.entries.map((entry) => entry.label)).toEqual(['File 2 (IM1)', 'File 3 (IM2)']);
    expect(result.skipped).toEqual([{ description: 'DICOMDIR', reason: 'not a DICOM file' }]);
    expect(result.directory).toBeUndefined();
  });

  it('refuses a named path that two files match but for the case of their letters', () => {
    const { files } = mediaFolder(1);
    const twin = { ...files[1], name: files[1].name.toLowerCase() };
    expect(refusalOf(() => unpackUpload([...files, twin], limits))).toEqual({
      status: 400,
      reason: 'dicomdir',
      detail:
        'File 2 (IM000001) and File 3 (im000001) have the same path but for the case of ' +
        'their letters: the file File 1 (DICOMDIR) names by it is ambiguous.',
    });
  });

  it('says nothing of the patient record, accepted or refused', () => {
    const { files } = mediaFolder(2);
    const accepted = JSON.stringify({ ...unpackUpload(files, limits), entries: [] });
    const refused = JSON.stringify(
      refusalOf(() => unpackUpload([files[0], file('x/IM000001', part10Stub())], limits)),
    );
    for (const output of [accepted, refused]) {
      expect(output).not.toContain('QXDIR');
      expect(output).not.toContain(recordPatientId);
      expect(output).not.toContain('Quill');
    }
  });
});

describe('unpackUpload: one .zip', () => {
  it('reads the DICOM entries of a .zip by content and lists the rest', () => {
    const images = [part10Stub(), part10Stub()];
    const archive = zipSync({
      'SERIES/IM1': images[0],
      'SERIES/IM2': images[1],
      'README.TXT': text('About this export.'),
      '__MACOSX/SERIES/._IM1': text('x'),
    });
    const result = unpackUpload([file('export.zip', archive)], limits);
    expect(result.entries.map(({ label, path }) => ({ label, path }))).toEqual([
      { label: 'Zip entry 1 (IM1)', path: 'SERIES/IM1' },
      { label: 'Zip entry 2 (IM2)', path: 'SERIES/IM2' },
    ]);
    expect(result.entries.map((entry) => entry.bytes)).toEqual(images);
    expect(result.skipped).toEqual([
      { description: '._IM1', reason: 'hidden file or archiver metadata' },
      { description: 'README.TXT', reason: 'not a DICOM file' },
    ]);
    expect(
      refusalOf(() =>
        unpackUpload([file('a.zip', zipSync({ 'README.TXT': text('no images') }))], limits),
      ),
    ).toMatchObject({ status: 415, reason: 'not-dicom' });
    expect(refusalOf(() => unpackUpload([file('a.zip', zipSync({}))], limits))).toEqual({
      status: 400,
      reason: 'no-files',
      detail: 'The .zip holds no DICOM files.',
    });
  });

  it('reads the tree a DICOMDIR in the .zip names, never inflating what it does not name', () => {
    const { files, images } = mediaFolder(3, 'CD');
    // 300 KiB of zeros: over the inflated bound of the upload (256 KiB) if it were inflated.
    const viewer = new Uint8Array(300 * kibibyte);
    const archive = zipSync({
      ...Object.fromEntries(files.map((entry) => [entry.name, entry.bytes])),
      'CD/VIEWER/VIEWER.EXE': viewer,
      'CD/README.TXT': text('Insert into a computer.'),
    });
    expect(archive.length).toBeLessThan(20 * kibibyte);
    const result = unpackUpload([file('cd.zip', archive)], limits);
    expect(result.entries.map((entry) => entry.path)).toEqual([
      'CD/DICOM/ST000001/SE000001/IM000001',
      'CD/DICOM/ST000001/SE000001/IM000002',
      'CD/DICOM/ST000001/SE000001/IM000003',
    ]);
    expect(result.entries.map((entry) => entry.bytes)).toEqual(images);
    expect(result.entries[0].label).toBe('Zip entry 2 (IM000001)');
    expect(result.directory).toEqual({
      patientCount: 1,
      studyCount: 1,
      seriesCount: 1,
      imageCount: 3,
    });
    expect(result.skipped).toEqual([
      { description: 'DICOMDIR', reason: 'media directory: read for its records' },
      { description: 'VIEWER.EXE', reason: 'not named by the DICOMDIR' },
      { description: 'README.TXT', reason: 'not named by the DICOMDIR' },
    ]);
    // Without the DICOMDIR, the same viewer must be inflated to be looked at: refused.
    const withoutDirectory = zipSync({
      'CD/DICOM/IM000001': images[0],
      'CD/VIEWER/VIEWER.EXE': viewer,
    });
    expect(refusalOf(() => unpackUpload([file('cd.zip', withoutDirectory)], limits))).toEqual({
      status: 413,
      reason: 'too-large',
      detail: 'Zip entry 2 (VIEWER.EXE) inflates to 0.3 MB; one DICOM file may be at most 0.1 MB.',
    });
  });

  it('refuses a .zip whose DICOMDIR names none of its entries', () => {
    const directory = encodeDirectory(seriesRecords(2));
    const archive = zipSync({ DICOMDIR: directory.bytes, 'OTHER/IM1': part10Stub() });
    expect(refusalOf(() => unpackUpload([file('a.zip', archive)], limits))).toEqual({
      status: 400,
      reason: 'dicomdir',
      detail:
        'None of the 2 image files the DICOMDIR names is in the .zip: send the folder that ' +
        'holds the DICOMDIR with all its subfolders, or a .zip of it.',
    });
  });

  it('keeps the limits of a .zip: entry count, one entry inflated, all entries inflated', () => {
    const tooMany = zipSync(
      Object.fromEntries(Array.from({ length: 21 }, (_, index) => [`IM${index}`, part10Stub()])),
    );
    expect(refusalOf(() => unpackUpload([file('a.zip', tooMany)], limits))).toEqual({
      status: 413,
      reason: 'too-many-files',
      detail: 'The .zip holds more than 20 files; an upload may hold at most 20.',
    });
    const heavy = zipSync(
      Object.fromEntries(
        Array.from({ length: 5 }, (_, index) => [`IM${index}`, new Uint8Array(60 * kibibyte)]),
      ),
    );
    expect(refusalOf(() => unpackUpload([file('a.zip', heavy)], limits))).toEqual({
      status: 413,
      reason: 'too-large',
      detail: 'The .zip inflates to more than 0.3 MB, the most one upload may hold.',
    });
  });
});
