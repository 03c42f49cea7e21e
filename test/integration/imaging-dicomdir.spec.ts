import { rmSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import dicomParser from 'dicom-parser';
import { zipSync } from 'fflate';
import {
  imagingProblemTypePrefix,
  type ImageSeriesView,
  type ProblemDetails,
} from '@emberline/shared';
import { unpackUpload, type UploadedFile } from '../../server/src/modules/imaging/upload-unpack';
import type { ApiClient } from '../support/test-app';
import { useImagingTestApp } from './imaging-test-app';
import {
  buildSeries,
  seededRandom,
  seriesSpec,
  slicePosition,
  seriesUploadCall,
  type JsonDataset,
  type SeriesSpec,
} from './imaging-fixtures';
import {
  dumpedRecords,
  folderFiles,
  makeMediaFolder,
  mediaPatientName,
  type MediaFolder,
} from './dicomdir-media';

// The reference: DICOMDIRs made by Debian's dcmtk (dcmmkdir, General Purpose CD-R profile)
// over series written with DICOM file IDs, and read back record by record with dcmtk's
// dcmdump. Emberline must read exactly the files dcmtk's IMAGE records name, in their order.

const kibibyte = 1024;
const mebibyte = 1024 * kibibyte;

/** The invented Patient's Name dcmmkdir needs (it refuses files without one). */
function withPatientName(overrides: Partial<SeriesSpec> = {}): SeriesSpec {
  return seriesSpec({
    ...overrides,
    adjust: (_s: number, dataset: JsonDataset) => {
      dataset['00100010'] = { vr: 'PN', Value: [{ Alphabetic: mediaPatientName }] };
    },
  });
}

function shuffled<T>(values: readonly T[], seed: number): T[] {
  const random = seededRandom(seed);
  const copy = [...values];
  for (let index = copy.length - 1; index > 0; index--) {
    const other = Math.floor(random() * (index + 1));
    [copy[index], copy[other]] = [copy[other], copy[index]];
  }
  return copy;
}

const sopInstanceOf = (bytes: Uint8Array) =>
  dicomParser.parseDicom(bytes).string('x00080018') ?? '';

const folders: MediaFolder[] = [];
afterAll(() => {
  for (const folder of folders) rmSync(folder.root, { recursive: true, force: true });
});

function mediaFolder(series: readonly Uint8Array[][]): MediaFolder {
  const folder = makeMediaFolder(series);
  folders.push(folder);
  return folder;
}

describe('unpackUpload against DICOMDIRs made by dcmtk dcmmkdir (DICOM PS3.10 section 8)', () => {
  const limits = { maxFiles: 100, maxInstanceBytes: mebibyte, maxInflatedBytes: 8 * mebibyte };
  const study = { studyUid: '1.2.826.0.1.3680043.10.99999.500.1' };

  it('reads the files of the IMAGE records dcmdump lists, in their order, whatever was sent first', () => {
    const folder = mediaFolder([
      buildSeries(withPatientName({ ...study, slices: 3 })),
      buildSeries(withPatientName({ ...study, slices: 4 })),
    ]);
    const records = dumpedRecords(folder);
    const images = records.filter((record) => record.type === 'IMAGE');
    expect(images).toHaveLength(7);
    const files: UploadedFile[] = [
      ...folderFiles(folder, 'EXPORT'),
      { name: 'EXPORT/README.TXT', bytes: new TextEncoder().encode('Export of one study.') },
    ];
    const result = unpackUpload(shuffled(files, 7), limits);

    // dcmtk's Referenced File IDs, relative to the DICOMDIR's folder, in record order.
    expect(result.entries.map((entry) => entry.path)).toEqual(
      images.map((record) => `EXPORT/${record.fileId.split('\\').join('/')}`),
    );
    // And each file is the instance dcmtk's record says it is (0004,1511).
    expect(result.entries.map((entry) => sopInstanceOf(entry.bytes))).toEqual(
      images.map((record) => record.sopInstanceUid),
    );
    const countOf = (type: string) => records.filter((record) => record.type === type).length;
    expect(result.directory).toEqual({
      patientCount: countOf('PATIENT'),
      studyCount: countOf('STUDY'),
      seriesCount: countOf('SERIES'),
      imageCount: countOf('IMAGE'),
    });
    expect(result.directory).toMatchObject({ patientCount: 1, studyCount: 1, seriesCount: 2 });
    expect(result.skipped).toEqual([
      { description: 'DICOMDIR', reason: 'media directory: read for its records' },
      { description: 'README.TXT', reason: 'not named by the DICOMDIR' },
    ]);
    expect(JSON.stringify(result.skipped)).not.toContain('QXMEDIA');
  });

  it('reads the same files from lower-case paths and from a .zip of the folder', () => {
    const folder = mediaFolder([buildSeries(withPatientName({ slices: 5 }))]);
    const expected = dumpedRecords(folder)
      .filter((record) => record.type === 'IMAGE')
      .map((record) => record.sopInstanceUid);
    const lowered = folderFiles(folder, 'cd').map((file) => ({
      ...file,
      name: file.name.toLowerCase(),
    }));
    const fromLowered = unpackUpload(lowered, limits);
    expect(fromLowered.entries.map((entry) => sopInstanceOf(entry.bytes))).toEqual(expected);
    const archive = zipSync(
      Object.fromEntries(folderFiles(folder, 'CD').map((file) => [file.name, file.bytes])),
    );
    const fromZip = unpackUpload([{ name: 'cd.zip', bytes: archive }], limits);
    expect(fromZip.entries.map((entry) => sopInstanceOf(entry.bytes))).toEqual(expected);
    expect(fromZip.entries[0].label).toMatch(/^Zip entry \d+ \(IM000001\)$/);
  });
});

describe('POST /api/cases/:id/series with a folder that holds a DICOMDIR', () => {
  const context = useImagingTestApp('dicomdir-test', 'dicomdir-test-secret-7c1e94a0b3d2f6e8a5c4', {
    IMAGING_MAX_FILES: '40',
    IMAGING_MAX_UPLOAD_BYTES: String(4 * mebibyte),
    IMAGING_MAX_INSTANCE_BYTES: String(512 * kibibyte),
    IMAGING_MAX_INFLATED_BYTES: String(2 * mebibyte),
  });
  const presenter = () => context.signIn();

  /**
   * The files, each with its relative path as its multipart filename, as a browser sends a
   * folder. form-data reduces `filename` to a base name; `filepath` keeps the path.
   */
  async function upload(client: ApiClient, files: readonly UploadedFile[]) {
    let { call } = await seriesUploadCall(client, context.ids.northDraft);
    for (const file of files) {
      const options = { filepath: file.name, contentType: 'application/octet-stream' };
      call = call.attach('files', Buffer.from(file.bytes), options);
    }
    return call;
  }

  function expectGeometry(view: ImageSeriesView, spec: SeriesSpec) {
    expect(view).toMatchObject({ modality: 'CT', sliceCount: 6, dimensions: [32, 32, 6] });
    // Δi = Pixel Spacing[1], Δj = Pixel Spacing[0] (DICOM PS3.3 C.7.6.2.1.1).
    expect(view.spacingMm[0]).toBeCloseTo(spec.pixelSpacing[1], 9);
    expect(view.spacingMm[1]).toBeCloseTo(spec.pixelSpacing[0], 9);
    expect(view.spacingMm[2]).toBeCloseTo(spec.sliceSpacingMm, 9);
    expect(view.orientation.sliceNormalLps).toEqual([0, 0, 1]);
    // The volume starts at the first slice's Image Position (Patient).
    slicePosition(spec, 0).forEach((value, axis) => {
      expect(view.originLps[axis]).toBeCloseTo(value, 6);
    });
  }

  it('stores the series the DICOMDIR names (201), leaving the media companions aside', async () => {
    const spec = withPatientName();
    const folder = mediaFolder([buildSeries(spec)]);
    const files: UploadedFile[] = [
      ...folderFiles(folder, 'EXPORT'),
      { name: 'EXPORT/README.TXT', bytes: new TextEncoder().encode('Export of one series.') },
      { name: 'EXPORT/VIEWER/VIEWER.EXE', bytes: new Uint8Array(600 * kibibyte) },
    ];
    const response = await upload(await presenter(), shuffled(files, 11));
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expectGeometry(response.body as ImageSeriesView, spec);
  });

  it('stores the series from a .zip of the same folder (201)', async () => {
    const spec = withPatientName();
    const folder = mediaFolder([buildSeries(spec)]);
    const archive = zipSync(
      Object.fromEntries(folderFiles(folder, 'CD').map((file) => [file.name, file.bytes])),
    );
    const response = await upload(await presenter(), [{ name: 'cd.zip', bytes: archive }]);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expectGeometry(response.body as ImageSeriesView, spec);
  });

  it('refuses a DICOMDIR sent without the files it names (400 dicomdir)', async () => {
    const folder = mediaFolder([buildSeries(withPatientName())]);
    const [directory] = folderFiles(folder, 'EXPORT').filter((file) =>
      file.name.endsWith('DICOMDIR'),
    );
    const stray = buildSeries(seriesSpec({ slices: 1 }))[0];
    const response = await upload(await presenter(), [
      directory,
      { name: 'EXPORT/OTHER/IM000001', bytes: stray },
    ]);
    expect(response.status).toBe(400);
    const problem = response.body as ProblemDetails;
    expect(problem.type).toBe(`${imagingProblemTypePrefix}dicomdir`);
    expect(problem.detail).toBe(
      'None of the 6 image files the DICOMDIR names is in the upload: send the folder that ' +
        'holds the DICOMDIR with all its subfolders, or a .zip of it.',
    );
  });
});
