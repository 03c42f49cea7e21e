import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { request as httpRequest, type Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, inject, it } from 'vitest';
import dcmjs from 'dcmjs';
import dicomParser from 'dicom-parser';
import { zipSync } from 'fflate';
import {
  decodeVolumeFile,
  seriesVolumeGeometry,
  voxelToLps,
  type ImageSeriesView,
  type ProblemDetails,
} from '@emberline/shared';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { FileStore } from '../../server/src/modules/imaging/file-store';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { UidReplacement } from '../../server/src/modules/imaging/uid-replacement.entity';
import type {
  DicomJsonDataset,
  DicomJsonElement,
} from '../../server/src/modules/imaging/dicom-json';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import {
  buildSeries,
  defaultStoredValue,
  identifyingFileName,
  identifyingValues,
  originalUidRoot,
  rawRequestHeaders,
  seriesSpec,
  setEnvironment,
  seriesUploadCall,
  uploadFiles,
} from './imaging-fixtures';

const PROFILE = 'DICOM PS3.15 Annex E, Basic Application Level Confidentiality Profile';
const kibibyte = 1024;
const mebibyte = 1024 * kibibyte;

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-imaging-test-'));
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'imaging-test-secret-0f3c9a1e6b2d4f7a8c5e',
  IMAGING_MAX_FILES: '40',
  IMAGING_MAX_UPLOAD_BYTES: String(2 * mebibyte),
  IMAGING_MAX_INSTANCE_BYTES: String(512 * kibibyte),
  IMAGING_MAX_INFLATED_BYTES: String(mebibyte),
  IMAGING_READ_TIMEOUT_MS: '15000',
  IMAGING_WORKER_MEMORY_MB: '96',
};
let restoreEnvironment: () => void = () => undefined;

let testApp: TestApp;
let ids: DemoIds;
/** Everything the process writes to stderr or stdout while the tests run. */
const capturedOutput: string[] = [];
let restoreOutput: () => void = () => undefined;

function captureOutput(): () => void {
  const streams = [process.stderr, process.stdout];
  const originals = streams.map((stream) => stream.write.bind(stream));
  streams.forEach((stream, index) => {
    stream.write = ((chunk: string | Uint8Array, ...rest: never[]) => {
      capturedOutput.push(typeof chunk === 'string' ? chunk : Buffer.from(chunk).toString());
      return originals[index](chunk, ...rest);
    }) as typeof stream.write;
  });
  return () =>
    streams.forEach((stream, index) => {
      stream.write = originals[index] as typeof stream.write;
    });
}

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  restoreOutput = captureOutput();
  testApp = await startTestApp();
});

afterAll(async () => {
  restoreOutput();
  await testApp.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
});

beforeEach(async () => {
  ids = await resetToDemo(testApp.orm);
  rmSync(fileStoreDir, { recursive: true, force: true });
  mkdirSync(fileStoreDir, { recursive: true });
});

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  const response = await client.signIn(email, demoPassword);
  expect(response.status).toBe(200);
  return client;
}

/** Every file under the file store, dot-files (temporary files) included. */
function storedFiles(dir = fileStoreDir): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((entry) =>
    entry.isDirectory() ? storedFiles(join(dir, entry.name)) : [join(dir, entry.name)],
  );
}

async function storedSeries(id: string): Promise<ImageSeries> {
  return testApp.orm.em.fork().findOneOrFail(ImageSeries, { id });
}

function problemOf(response: { body: unknown }): ProblemDetails {
  return response.body as ProblemDetails;
}

/** An identifying CT series, uploaded by the presenter to the north draft case. */
async function uploadIdentifyingSeries(caseId = ids.northDraft) {
  const presenter = await signedIn('presenter@emberline.test');
  const spec = seriesSpec({ isIdentifying: true });
  const response = await uploadFiles(presenter, caseId, buildSeries(spec), identifyingFileName);
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  const view = response.body as ImageSeriesView;
  return { presenter, spec, view, header: (await storedSeries(view.id)).dicomHeader };
}

function walk(dataset: DicomJsonDataset, visit: (tag: string, element: DicomJsonElement) => void) {
  for (const [tag, element] of Object.entries(dataset)) {
    visit(tag, element);
    if (element.vr === 'SQ') {
      for (const item of element.Value ?? []) walk(item as DicomJsonDataset, visit);
    }
  }
}

const firstValue = (dataset: DicomJsonDataset, tag: string) => dataset[tag]?.Value?.[0];

function databaseDump(): string {
  return execFileSync('/usr/lib/postgresql/15/bin/pg_dump', ['--no-owner', inject('databaseUrl')], {
    encoding: 'latin1',
    maxBuffer: 256 * mebibyte,
  });
}

describe(`upload and de-identification (${PROFILE})`, () => {
  it('stores an identifying 32 × 32 × 6 CT series and answers 201 with its geometry', async () => {
    const { view } = await uploadIdentifyingSeries();
    expect(view).toMatchObject({
      caseId: ids.northDraft,
      modality: 'CT',
      dimensions: [32, 32, 6],
      sliceCount: 6,
      valueUnit: 'HU',
      seriesNumber: 3,
      // No window in the files: the CT default, abdomen 40/400 (common practice).
      window: { centre: 40, width: 400 },
      volumeUrl: `/api/series/${view.id}/volume`,
      uploadedBy: { displayName: 'Dr Priya Raman' },
    });
    // Δi = Pixel Spacing[1], Δj = Pixel Spacing[0] (DICOM PS3.3 C.7.6.2.1.1).
    expect(view.spacingMm[0]).toBeCloseTo(0.8, 9);
    expect(view.spacingMm[1]).toBeCloseTo(0.7, 9);
    expect(view.spacingMm[2]).toBeCloseTo(2.5, 9);
    expect(view.orientation.sliceNormalLps).toEqual([0, 0, 1]);
    expect(view.valueRange).toEqual({
      min: defaultStoredValue(0, 0, 0) - 1024,
      max: defaultStoredValue(31, 31, 5) - 1024,
    });
    expect(storedFiles()).toHaveLength(1);
  });

  it('leaves no identifying value in the database dump, the file store or the logs', async () => {
    const { presenter, view } = await uploadIdentifyingSeries();
    // A read too: nothing identifying on the way out either.
    expect((await presenter.get(view.volumeUrl)).status).toBe(200);
    expect((await presenter.get(`/api/cases/${ids.northDraft}/series`)).status).toBe(200);
    const forbidden = [...identifyingValues().forbidden, 'QXFILENAME'];
    // Replacement UIDs (2.25.<39 random digits>) are ours: dropped before looking for dates.
    const withoutOurUids = (text: string) => text.replace(/2\.25\.\d+/g, '2.25.');
    const haystacks = {
      database: withoutOurUids(databaseDump()),
      files: storedFiles()
        .map((file) => withoutOurUids(readFileSync(file).toString('latin1')))
        .join('\n'),
      logs: [...testApp.logs, ...capturedOutput].join('\n'),
    };
    expect(forbidden.length).toBeGreaterThan(120);
    // The values are really there to be found: the header as received holds each of them.
    const received = Buffer.from(buildSeries(seriesSpec({ isIdentifying: true }))[0]).toString(
      'latin1',
    );
    for (const value of forbidden.filter((entry) => entry !== 'QXFILENAME')) {
      expect(received.includes(value), `${value} in the test file`).toBe(true);
    }
    for (const [where, text] of Object.entries(haystacks)) {
      const found = forbidden.filter((value) => text.includes(value));
      expect(found, `identifying values in the ${where}`).toEqual([]);
    }
  });

  it('records the de-identification: Patient Identity Removed YES, the method, codes 113100 and 113107', async () => {
    const { header, view } = await uploadIdentifyingSeries();
    // Patient Identity Removed (0012,0062) = YES (PS3.15 E.1.1).
    expect(header.dataset['00120062']).toEqual({ vr: 'CS', Value: ['YES'] });
    // De-identification Method (0012,0063): LO, at most 64 characters a value (PS3.5 6.2).
    const method = header.dataset['00120063'];
    expect(method?.vr).toBe('LO');
    expect(method?.Value?.length).toBeGreaterThan(0);
    for (const value of method?.Value ?? []) expect(String(value).length).toBeLessThanOrEqual(64);
    // De-identification Method Code Sequence (0012,0064): DCM 113100 (Basic Application
    // Confidentiality Profile) and 113107 (Retain Longitudinal Temporal Information Modified
    // Dates Option), CID 7050, from memory.
    const codes = (header.dataset['00120064']?.Value ?? []).map((item) => {
      const code = item as DicomJsonDataset;
      return [firstValue(code, '00080100'), firstValue(code, '00080102')];
    });
    expect(codes).toEqual([
      ['113100', 'DCM'],
      ['113107', 'DCM'],
    ]);
    // Longitudinal Temporal Information Modified (0028,0303) = MODIFIED (from memory).
    expect(header.dataset['00280303']?.Value).toEqual(['MODIFIED']);
    expect(view.deidentification.methodCodes.map((code) => code.code)).toEqual([
      '113100',
      '113107',
    ]);
    expect(view.deidentification.patientIdentityRemoved).toBe(true);
  });

  // DICOM PS3.15 Annex E, Table E.1-1 (Basic Application Level Confidentiality Profile) [S]
  // unless marked "from memory"; where the table offers a choice Emberline takes the strictest.
  it.each([
    { tag: '00100010', name: 'Patient Name', outcome: 'zero-length', source: 'Z' },
    { tag: '00100020', name: 'Patient ID', outcome: 'zero-length', source: 'Z, from memory' },
    { tag: '00100030', name: "Patient's Birth Date", outcome: 'zero-length', source: 'Z' },
    { tag: '00080090', name: "Referring Physician's Name", outcome: 'zero-length', source: 'Z' },
    { tag: '00080050', name: 'Accession Number', outcome: 'zero-length', source: 'Z' },
    { tag: '00200010', name: 'Study ID', outcome: 'zero-length', source: 'Z' },
    { tag: '00080080', name: 'Institution Name', outcome: 'removed', source: 'X/Z/D' },
    { tag: '00081070', name: "Operators' Name", outcome: 'removed', source: 'X/Z/D' },
    { tag: '00081010', name: 'Station Name', outcome: 'removed', source: 'X/Z/D' },
    { tag: '00080081', name: 'Institution Address', outcome: 'removed', source: 'X' },
    { tag: '00081030', name: 'Study Description', outcome: 'removed', source: 'X' },
    { tag: '0008103E', name: 'Series Description', outcome: 'removed', source: 'X' },
    { tag: '00101010', name: "Patient's Age", outcome: 'removed', source: 'X' },
    {
      tag: '00401004',
      name: 'an attribute the table does not name',
      outcome: 'removed',
      source: 'Emberline',
    },
  ])('$name ($tag): $outcome ($source)', async ({ tag, outcome }) => {
    const { header } = await uploadIdentifyingSeries();
    if (outcome === 'removed') expect(header.dataset[tag]).toBeUndefined();
    else expect(header.dataset[tag]).toEqual({ vr: expect.any(String) });
  });

  it('removes every private attribute, nested ones included', async () => {
    const { header } = await uploadIdentifyingSeries();
    const privateTags: string[] = [];
    walk(header.dataset, (tag) => {
      if (parseInt(tag.slice(0, 4), 16) % 2 === 1) privateTags.push(tag);
    });
    expect(privateTags).toEqual([]);
    // The kept sequence is still there, cleaned: its person name zero-length (Z).
    const item = header.dataset['00081140']?.Value?.[0] as DicomJsonDataset;
    expect(item['00100010']).toEqual({ vr: 'PN' });
    expect(firstValue(item, '00081150')).toBe('1.2.840.10008.5.1.4.1.1.2');
  });

  it('replaces the UIDs (U) with 2.25 UIDs, in the file meta and inside sequences', async () => {
    const { header, view, spec } = await uploadIdentifyingSeries();
    const uid = (dataset: DicomJsonDataset, tag: string) => String(firstValue(dataset, tag));
    const replaced = [
      uid(header.dataset, '0020000D'),
      uid(header.dataset, '0020000E'),
      uid(header.dataset, '00080018'),
      uid(header.dataset, '00200052'),
      uid(header.meta, '00020003'),
      uid(header.dataset['00081140']?.Value?.[0] as DicomJsonDataset, '00081155'),
      uid(header.dataset['00082112']?.Value?.[0] as DicomJsonDataset, '00081155'),
    ];
    for (const value of replaced) {
      expect(value).toMatch(/^2\.25\.(0|[1-9]\d{0,38})$/);
      expect(value.length).toBeLessThanOrEqual(64);
    }
    expect(replaced).not.toContain(spec.studyUid);
    // Media Storage SOP Instance UID of the new meta is the new SOP Instance UID.
    expect(uid(header.meta, '00020003')).toBe(uid(header.dataset, '00080018'));
    expect(uid(header.meta, '00020010')).toBe('1.2.840.10008.1.2.1');
    expect(uid(header.meta, '00020012').startsWith(originalUidRoot)).toBe(false);
    expect(header.meta['00020016']).toBeUndefined();
    // Standard UIDs are kept (K): SOP Class UID.
    expect(uid(header.dataset, '00080016')).toBe('1.2.840.10008.5.1.4.1.1.2');
    expect(view.id).toBeTruthy();
  });

  it('shifts every date of a case by one whole number of days and keeps the times of day', async () => {
    const { header } = await uploadIdentifyingSeries();
    const { shiftedDates, keptTimes } = identifyingValues();
    const days = (value: string) =>
      Date.UTC(
        Number(value.slice(0, 4)),
        Number(value.slice(4, 6)) - 1,
        Number(value.slice(6, 8)),
      ) / 86_400_000;
    const shifts = [...shiftedDates].map(([tag, original]) => {
      const stored = String(firstValue(header.dataset, tag));
      expect(stored, tag).toMatch(/^\d{8}/);
      return days(stored) - days(original);
    });
    expect(shifts.length).toBeGreaterThanOrEqual(6);
    // One shift for all, a whole number of days, 1 to 10 years back (Emberline's choice).
    expect(new Set(shifts).size).toBe(1);
    expect(Number.isInteger(shifts[0])).toBe(true);
    expect(shifts[0]).toBeLessThanOrEqual(-366);
    expect(shifts[0]).toBeGreaterThanOrEqual(-3653);
    // DT keeps its time: Acquisition DateTime.
    expect(String(firstValue(header.dataset, '0008002A')).slice(8)).toBe('101512.271828');
    for (const [tag, time] of keptTimes) expect(firstValue(header.dataset, tag), tag).toBe(time);
    expect(keptTimes.size).toBeGreaterThanOrEqual(4);
  });

  it('maps the same original UIDs to the same replacements within a case, to others in another', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const first = seriesSpec({ isIdentifying: true });
    const sameStudy = seriesSpec({
      isIdentifying: true,
      studyUid: first.studyUid,
      frameOfReferenceUid: first.frameOfReferenceUid,
    });
    const upload = async (caseId: string, spec = first) => {
      const response = await uploadFiles(presenter, caseId, buildSeries(spec));
      expect(response.status, JSON.stringify(response.body)).toBe(201);
      return (await storedSeries((response.body as ImageSeriesView).id)).dicomHeader.dataset;
    };
    const a = await upload(ids.northDraft);
    const b = await upload(ids.northDraft, sameStudy);
    const other = await upload(ids.northReady);
    const uids = (dataset: DicomJsonDataset) => ({
      study: firstValue(dataset, '0020000D'),
      frame: firstValue(dataset, '00200052'),
      series: firstValue(dataset, '0020000E'),
      referenced: firstValue(dataset['00081140']?.Value?.[0] as DicomJsonDataset, '00081155'),
    });
    expect(uids(b).study).toBe(uids(a).study);
    expect(uids(b).frame).toBe(uids(a).frame);
    expect(uids(b).referenced).toBe(uids(a).referenced);
    expect(uids(b).series).not.toBe(uids(a).series);
    for (const key of ['study', 'frame', 'series', 'referenced'] as const) {
      expect(uids(other)[key]).not.toBe(uids(a)[key]);
    }
    // Dates move by the case's own shift: the same in both series of the north draft.
    expect(firstValue(b, '00080020')).toBe(firstValue(a, '00080020'));
    // The mapping table holds salted hashes, never an original UID.
    const rows = await testApp.orm.em.fork().find(UidReplacement, {});
    expect(rows.length).toBeGreaterThan(0);
    for (const row of rows) {
      expect(row.originalHash).toMatch(/^[0-9a-f]{64}$/);
      expect(row.replacementUid.startsWith('2.25.')).toBe(true);
    }
  });

  it('refuses the same series twice in a case (409) and keeps the one volume', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const files = buildSeries(seriesSpec());
    const [one, two] = await Promise.all([
      uploadFiles(presenter, ids.northDraft, files),
      uploadFiles(presenter, ids.northDraft, files),
    ]);
    expect([one.status, two.status].sort()).toEqual([201, 409]);
    const again = await uploadFiles(presenter, ids.northDraft, files);
    expect(again.status).toBe(409);
    expect(problemOf(again).detail).toMatch(/stored for the case already/);
    expect(storedFiles()).toHaveLength(1);
    expect(await testApp.orm.em.fork().count(ImageSeries, {})).toBe(1);
  });

  it('stores a header that dcmjs writes back as a Part 10 file with a zero preamble', async () => {
    const { header } = await uploadIdentifyingSeries();
    const binary = (dataset: DicomJsonDataset) =>
      Object.fromEntries(
        Object.entries(dataset).map(([tag, element]) => [
          tag,
          element.InlineBinary !== undefined
            ? { vr: element.vr, Value: [Buffer.from(element.InlineBinary, 'base64').buffer] }
            : // dcmjs writes a zero-length value from an empty Value.
              { vr: element.vr, Value: element.Value ?? [] },
        ]),
      );
    const dict = new dcmjs.data.DicomDict(binary(header.meta));
    dict.dict = binary(header.dataset);
    const bytes = new Uint8Array(dict.write());
    expect(bytes.subarray(0, 128).every((byte) => byte === 0)).toBe(true);
    expect(Buffer.from(bytes.subarray(128, 132)).toString()).toBe('DICM');
    const parsed = dicomParser.parseDicom(bytes);
    expect(parsed.string('x00120062')).toBe('YES');
    expect(parsed.string('x00100010') ?? '').toBe('');
  });
});

describe('access to series: by board membership, upload by the presenting physician', () => {
  const roles = [
    { who: 'presenter', email: 'presenter@emberline.test', upload: 201, read: 200 },
    { who: 'board member', email: 'member@emberline.test', upload: 403, read: 200 },
    { who: 'proceduralist', email: 'proceduralist@emberline.test', upload: 403, read: 200 },
    // A nurse coordinator sees decided cases only: the draft is out of reach.
    { who: 'coordinator', email: 'coordinator@emberline.test', upload: 404, read: 404 },
    { who: 'south member', email: 'south@emberline.test', upload: 404, read: 404 },
    { who: 'administrator', email: 'admin@emberline.test', upload: 404, read: 404 },
    { who: 'anonymous', email: null, upload: 401, read: 401 },
  ];

  it.each(roles)(
    '$who: upload $upload, list, series and volume $read',
    async ({ email, upload, read }) => {
      const presenter = await signedIn('presenter@emberline.test');
      const stored = await uploadFiles(presenter, ids.northDraft, buildSeries(seriesSpec()));
      expect(stored.status).toBe(201);
      const view = stored.body as ImageSeriesView;
      const client = email ? await signedIn(email) : new ApiClient(testApp.app);
      const uploaded = await uploadFiles(client, ids.northDraft, buildSeries(seriesSpec()));
      expect(uploaded.status).toBe(upload);
      expect((await client.get(`/api/cases/${ids.northDraft}/series`)).status).toBe(read);
      expect((await client.get(`/api/series/${view.id}`)).status).toBe(read);
      expect((await client.get(view.volumeUrl)).status).toBe(read);
    },
  );

  it('lets a coordinator see a decided case but not upload to it (403)', async () => {
    const coordinator = await signedIn('coordinator@emberline.test');
    const response = await uploadFiles(coordinator, ids.northDecided, buildSeries(seriesSpec()));
    expect(response.status).toBe(403);
    expect((await coordinator.get(`/api/cases/${ids.northDecided}/series`)).status).toBe(200);
  });

  it('answers 404 for malformed and unknown ids', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    expect((await presenter.get('/api/cases/not-a-uuid/series')).status).toBe(404);
    expect((await presenter.get('/api/series/not-a-uuid/volume')).status).toBe(404);
    expect((await presenter.get(`/api/series/${ids.northDraft}/volume`)).status).toBe(404);
    const upload = await uploadFiles(presenter, 'not-a-uuid', buildSeries(seriesSpec()));
    expect(upload.status).toBe(404);
  });
});

describe('the volume body', () => {
  it('serves EMBERVOL, the JSON header and int16 voxels with the rescale applied', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const spec = seriesSpec({ rescale: { slope: 2, intercept: -1024 } });
    const created = await uploadFiles(presenter, ids.northDraft, buildSeries(spec));
    expect(created.status).toBe(201);
    const view = created.body as ImageSeriesView;
    const response = await presenter
      .get(view.volumeUrl)
      .buffer(true)
      .parse((res, callback) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => callback(null, Buffer.concat(chunks)));
      });
    expect(response.status).toBe(200);
    expect(response.headers['content-type']).toBe('application/octet-stream');
    expect(response.headers['cache-control']).toBe('private, no-store');
    const body = response.body as Buffer;
    expect(body.subarray(0, 8).toString('latin1')).toBe('EMBERVOL');
    expect(body.length).toBe(view.byteLength);
    const { header, voxels } = decodeVolumeFile(new Uint8Array(body));
    expect(header.dimensions).toEqual(view.dimensions);
    expect(header.originLps).toEqual(view.originLps);
    expect(header.valueUnit).toBe('HU');
    expect(voxels.length).toBe(32 * 32 * 6);
    // Hounsfield units = stored × Rescale Slope + Rescale Intercept (PS3.3 C.11.1.1.2, memory).
    const expected = Int16Array.from({ length: voxels.length }, (_, index) => {
      const i = index % 32;
      const j = Math.floor(index / 32) % 32;
      const k = Math.floor(index / 1024);
      return 2 * defaultStoredValue(i, j, k) - 1024;
    });
    expect(voxels).toEqual(expected);
    // The header's geometry is the view's (DICOM PS3.3 C.7.6.2.1.1).
    const corner = voxelToLps(seriesVolumeGeometry(view), [31, 31, 5]);
    expect(corner[0]).toBeCloseTo(-175 + 31 * 0.8, 9);
    expect(corner[1]).toBeCloseTo(-200 + 31 * 0.7, 9);
    expect(corner[2]).toBeCloseTo(50 + 5 * 2.5, 9);
  });

  it('audits the upload, the list, the series and every volume read', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const created = await uploadFiles(presenter, ids.northDraft, buildSeries(seriesSpec()));
    const view = created.body as ImageSeriesView;
    await presenter.get(view.volumeUrl);
    await presenter.get(view.volumeUrl);
    await presenter.get(`/api/cases/${ids.northDraft}/series`);
    await presenter.get(`/api/series/${view.id}`);
    const events = await testApp.orm.em
      .fork()
      .find(AuditEvent, { action: { $like: 'series.%' } }, { orderBy: { at: 'asc' } });
    expect(events.map((event) => [event.action, event.outcome])).toEqual([
      ['series.upload', 'success'],
      ['series.volume-read', 'success'],
      ['series.volume-read', 'success'],
      ['series.list', 'success'],
      ['series.read', 'success'],
    ]);
    expect(events[0]).toMatchObject({
      entityId: ids.northDraft,
      actorEmail: 'presenter@emberline.test',
      detail: { seriesId: view.id, sliceCount: 6 },
    });
    expect(events[1]).toMatchObject({ entityType: 'series', entityId: view.id });
  });
});

describe('limits and refused uploads', () => {
  it('refuses more files than the limit with 413', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const files = Array.from({ length: 41 }, () => new Uint8Array(16));
    const response = await uploadFiles(presenter, ids.northDraft, files);
    expect(response.status).toBe(413);
    expect(problemOf(response).detail).toMatch(/at most 40/);
    expect(problemOf(response).type).toBe('urn:emberline:problem:imaging:too-many-files');
  });

  it('refuses an upload larger than the limit with 413', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await uploadFiles(presenter, ids.northDraft, [
      new Uint8Array(mebibyte),
      new Uint8Array(mebibyte + 1),
    ]);
    expect(response.status).toBe(413);
    expect(problemOf(response).detail).toMatch(/larger than 2\.0 MB/);
  });

  it('refuses one file larger than a DICOM file may be with 413', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await uploadFiles(presenter, ids.northDraft, [
      new Uint8Array(512 * kibibyte + 1),
    ]);
    expect(response.status).toBe(413);
    expect(problemOf(response).detail).toMatch(
      /File 1 \(slice-0\.dcm\) is 0\.5 MB; one DICOM file may be at most/,
    );
  });

  it('takes a .zip of the series, leaving DICOMDIR and archiver entries aside', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const entries: Record<string, Uint8Array> = {};
    buildSeries(seriesSpec()).forEach((file, index) => {
      entries[`SERIES/IM${index}`] = file;
    });
    entries.DICOMDIR = new Uint8Array(200);
    entries['__MACOSX/SERIES/._IM0'] = new Uint8Array(10);
    const response = await uploadFiles(
      presenter,
      ids.northDraft,
      [zipSync(entries)],
      () => 'a.zip',
    );
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect((response.body as ImageSeriesView).sliceCount).toBe(6);
  });

  it('refuses a .zip of more entries than the limit with 413', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const entries = Object.fromEntries(
      Array.from({ length: 41 }, (_, index) => [`f${index}.dcm`, new Uint8Array(8)]),
    );
    const response = await uploadFiles(presenter, ids.northDraft, [zipSync(entries)]);
    expect(response.status).toBe(413);
    expect(problemOf(response).detail).toMatch(/more than 40 files/);
  });

  it('refuses a .zip that inflates past the limit with 413, before inflating it', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    // Three entries of 400 KiB of zeros: a few kilobytes compressed, 1.2 MiB inflated.
    const zeros = () => new Uint8Array(400 * kibibyte);
    const archive = zipSync({ a: zeros(), b: zeros(), c: zeros() });
    expect(archive.length).toBeLessThan(10 * kibibyte);
    const response = await uploadFiles(presenter, ids.northDraft, [archive]);
    expect(response.status).toBe(413);
    expect(problemOf(response).detail).toMatch(/inflates to more than 1\.0 MB/);
  });

  it('refuses a .zip whose entry inflates beyond the size it declares, within the bound', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const archive = zipSync({ a: new Uint8Array(400 * kibibyte) });
    // Patch the sizes of the central directory entry (offsets 20 and 24 of PK\1\2) to 200.
    const view = new DataView(archive.buffer, archive.byteOffset, archive.byteLength);
    for (let offset = 0; offset < archive.length - 4; offset++) {
      if (view.getUint32(offset, true) === 0x02014b50) view.setUint32(offset + 24, 200, true);
    }
    const response = await uploadFiles(presenter, ids.northDraft, [archive]);
    expect(response.status).toBeGreaterThanOrEqual(400);
    expect(response.status).toBeLessThan(500);
    expect(problemOf(response).detail).toBeTruthy();
  });

  it('refuses a .zip sent with other files (400)', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const [slice] = buildSeries(seriesSpec());
    const response = await uploadFiles(presenter, ids.northDraft, [slice, zipSync({ a: slice })]);
    expect(response.status).toBe(400);
    expect(problemOf(response).detail).toMatch(/send one \.zip alone/);
  });

  it('refuses a body that is not multipart/form-data with 415', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await presenter.post(`/api/cases/${ids.northDraft}/series`, { files: [] });
    expect(response.status).toBe(415);
    expect(problemOf(response).detail).toMatch(/multipart\/form-data/);
  });

  it('refuses a form without files, or with files in another field (400)', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const { call } = await seriesUploadCall(presenter, ids.northDraft);
    const none = await call.field('note', 'no files here');
    expect(none.status).toBe(400);
    expect(problemOf(none).detail).toMatch(/holds no files/);
    const elsewhere = await uploadFiles(
      presenter,
      ids.northDraft,
      buildSeries(seriesSpec()),
      undefined,
      'images',
    );
    expect(elsewhere.status).toBe(400);
    expect(problemOf(elsewhere).detail).toMatch(/field "images".*field "files"/);
  });

  it('refuses a declared length far past the limit with 413 before reading the body', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const headers = await rawRequestHeaders(presenter);
    const server = await listening();
    try {
      const { status, body } = await rawPost(server, headers, {
        'Content-Type': 'multipart/form-data; boundary=xyz',
        'Content-Length': String(64 * mebibyte),
      });
      expect(status).toBe(413);
      expect(JSON.parse(body).detail).toMatch(/larger than 2\.0 MB/);
    } finally {
      server.close();
    }
  });

  it('keeps nothing of an upload aborted midway, and answers afterwards', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const headers = await rawRequestHeaders(presenter);
    const server = await listening();
    try {
      await abortedUpload(server, headers);
      // The server saw the abort: a refused upload, audited.
      const refused = await waitFor(async () =>
        testApp.orm.em.fork().findOne(AuditEvent, { action: 'series.upload', outcome: 'refused' }),
      );
      expect(refused?.detail).toEqual({ reason: 'multipart' });
      expect(storedFiles()).toEqual([]);
      expect(await testApp.orm.em.fork().count(ImageSeries, {})).toBe(0);
      expect((await presenter.get('/api/health')).status).toBe(200);
      // And the next upload goes through.
      const next = await uploadFiles(presenter, ids.northDraft, buildSeries(seriesSpec()));
      expect(next.status).toBe(201);
    } finally {
      server.close();
    }
  });

  it('leaves nothing in the file store after a refused series', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const files = buildSeries(seriesSpec());
    const response = await uploadFiles(presenter, ids.northDraft, [files[0], files[2], files[3]]);
    expect(response.status).toBe(400);
    expect(storedFiles()).toEqual([]);
  });

  it('removes the temporary file when the atomic write cannot complete', async () => {
    const store = new FileStore(join(fileStoreDir, 'atomic'));
    const key = store.newVolumeKey();
    // A folder where the file should land: the rename fails.
    const target = join(store.rootDir, ...key.split('/'));
    mkdirSync(join(target, 'occupied'), { recursive: true });
    writeFileSync(join(target, 'occupied', 'x'), 'x');
    await expect(store.writeAtomically(key, [new Uint8Array(64)])).rejects.toThrow();
    expect(storedFiles(join(store.rootDir, 'volumes'))).toEqual([join(target, 'occupied', 'x')]);
  });

  it('answers a refused upload with problem details naming the reason, and audits it', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const [slice] = buildSeries(seriesSpec());
    const response = await uploadFiles(presenter, ids.northDraft, [slice]);
    expect(response.status).toBe(400);
    expect(response.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(problemOf(response)).toMatchObject({
      type: 'urn:emberline:problem:imaging:geometry:too-few-slices',
      status: 400,
      detail: 'A volume needs at least 2 slices; the series has 1.',
    });
    const events = await testApp.orm.em
      .fork()
      .find(AuditEvent, { action: 'series.upload', outcome: 'refused' });
    expect(events.map((event) => event.detail)).toEqual([{ reason: 'geometry:too-few-slices' }]);
  });
});

// --- Raw HTTP, for what supertest cannot do: abort midway, declare a length it will not send.

async function listening(): Promise<Server> {
  const server = testApp.app.listen(0, '127.0.0.1');
  await new Promise<void>((resolve) => server.once('listening', () => resolve()));
  return server;
}

function portOf(server: Server): number {
  const address = server.address();
  if (!address || typeof address === 'string') throw new Error('not listening on a port');
  return address.port;
}

function rawPost(
  server: Server,
  headers: Record<string, string>,
  extra: Record<string, string>,
): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const call = httpRequest(
      {
        host: '127.0.0.1',
        port: portOf(server),
        method: 'POST',
        path: `/api/cases/${ids.northDraft}/series`,
        headers: { ...headers, ...extra },
      },
      (response) => {
        let body = '';
        response.setEncoding('utf8');
        response.on('data', (chunk: string) => (body += chunk));
        response.on('end', () => resolve({ status: response.statusCode ?? 0, body }));
      },
    );
    call.on('error', reject);
    // Send nothing of the promised body; the server answers from the headers alone.
    call.flushHeaders();
  });
}

/** Starts a multipart upload of a real slice, sends half of it, then drops the connection. */
async function abortedUpload(server: Server, headers: Record<string, string>): Promise<void> {
  const [slice] = buildSeries(seriesSpec());
  const boundary = 'emberline-abort-test';
  const head = Buffer.from(
    `--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="a.dcm"\r\n` +
      'Content-Type: application/dicom\r\n\r\n',
  );
  await new Promise<void>((resolve) => {
    const call = httpRequest({
      host: '127.0.0.1',
      port: portOf(server),
      method: 'POST',
      path: `/api/cases/${ids.northDraft}/series`,
      headers: {
        ...headers,
        'Content-Type': `multipart/form-data; boundary=${boundary}`,
        'Content-Length': String(head.length + slice.length + 64),
      },
    });
    call.on('error', () => resolve());
    call.write(head);
    call.write(slice.subarray(0, slice.length / 2));
    setTimeout(() => {
      call.destroy();
      resolve();
    }, 150);
  });
}

async function waitFor<T>(probe: () => Promise<T | null>, timeoutMs = 5000): Promise<T | null> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const value = await probe();
    if (value) return value;
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
  return null;
}
