/**
 * Whole studies in one upload: a synthetic study of an arterial and a portal-venous phase (two
 * CT series of one study), a localizer and a dose report, all invented. The upload answers 202
 * with the listing; the presenter keeps the portal-venous phase; nothing of the arterial
 * phase, the localizer or the report is stored — not its volume, not its UIDs' replacements,
 * not its description. DICOM PS3.3 (Series Instance UID groups a series; Image Type value 3
 * LOCALIZER marks a scout, C.8.2.1.1.1; SOP Class X-Ray Radiation Dose SR 1.2.840.10008.5.1.4.1.1.88.67,
 * PS3.4 Annex B, from memory) is the source of how the objects are told apart.
 */
import { execFileSync } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { describe, expect, inject, it } from 'vitest';
import type { ImageSeriesView, UploadListing, UploadProgress } from '@emberline/shared';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { CaseDeidentificationKeys } from '../../server/src/modules/imaging/case-deidentification-keys';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { UidReplacement } from '../../server/src/modules/imaging/uid-replacement.entity';
import { ApiClient } from '../support/test-app';
import { demoPassword } from '../support/demo';
import {
  buildSeries,
  originalUid,
  part10,
  rawRequestHeaders,
  seriesSpec,
  seriesUploadCall,
  type JsonDataset,
} from './imaging-fixtures';
import { useImagingTestApp } from './imaging-test-app';

const secret = 'imaging-study-secret-4e1a9c7b3d5f2a8c6e0b';
const context = useImagingTestApp('imaging-study', secret);
const presenter = () => context.signIn();
const volumesStored = () => context.volumesStored();

function databaseDump(): string {
  return execFileSync('/usr/lib/postgresql/15/bin/pg_dump', ['--no-owner', inject('databaseUrl')], {
    encoding: 'latin1',
    maxBuffer: 256 * 1_048_576,
  });
}

const describe_ = (text: string) => ({ '0008103E': { vr: 'LO', Value: [text] } });

/** The invented study: two phases, a localizer, a dose report; what each carries. */
function study() {
  const studyUid = originalUid();
  const frameOfReferenceUid = originalUid();
  const arterialUid = originalUid();
  const venousUid = originalUid();
  const withSeries =
    (number: string, description: string, agent?: string) => (_s: number, dataset: JsonDataset) => {
      Object.assign(dataset, describe_(description));
      dataset['00200011'] = { vr: 'IS', Value: [number] };
      dataset['00180050'] = { vr: 'DS', Value: ['2.5'] };
      if (agent) dataset['00180010'] = { vr: 'LO', Value: [agent] };
    };
  const arterial = buildSeries(
    seriesSpec({
      studyUid,
      frameOfReferenceUid,
      seriesUid: arterialUid,
      slices: 5,
      adjust: withSeries('4', 'QXART Arterial Quill 2.5mm', 'IOHEXOL'),
    }),
  );
  const venous = buildSeries(
    seriesSpec({
      studyUid,
      frameOfReferenceUid,
      seriesUid: venousUid,
      slices: 6,
      adjust: withSeries('5', 'Portal venous 2.5mm', 'IOHEXOL'),
    }),
  );
  const localizerUid = originalUid();
  const localizer = buildSeries(
    seriesSpec({
      studyUid,
      frameOfReferenceUid,
      seriesUid: localizerUid,
      slices: 1,
      adjust: (_s, dataset) => {
        dataset['00080008'] = { vr: 'CS', Value: ['ORIGINAL', 'PRIMARY', 'LOCALIZER'] };
        dataset['00200011'] = { vr: 'IS', Value: ['1'] };
        Object.assign(dataset, describe_('QXSCOUT Topogram'));
      },
    }),
  );
  const reportUid = originalUid();
  const doseReport = part10({
    '00080016': { vr: 'UI', Value: ['1.2.840.10008.5.1.4.1.1.88.67'] },
    '00080018': { vr: 'UI', Value: [originalUid()] },
    '00080060': { vr: 'CS', Value: ['SR'] },
    '00100010': { vr: 'PN', Value: [{ Alphabetic: 'QXREPORT^Quill' }] },
    '0020000D': { vr: 'UI', Value: [studyUid] },
    '0020000E': { vr: 'UI', Value: [reportUid] },
    '00200011': { vr: 'IS', Value: ['997'] },
    ...describe_('QXDOSE Dose Report'),
  });
  return {
    files: [...localizer, ...arterial, doseReport, ...venous],
    uids: { studyUid, arterialUid, venousUid, localizerUid, reportUid },
    arterialSopUids: arterial.map((file) => sopInstanceUidOf(file)),
  };
}

function sopInstanceUidOf(file: Uint8Array): string {
  const text = Buffer.from(file).toString('latin1');
  const match = /1\.2\.826\.0\.1\.3680043\.10\.99999\.\d+/g;
  // The SOP Instance UID is the second original UID the file holds (after the meta's copy).
  return [...text.matchAll(match)][0][0];
}

async function uploadStudy(client: ApiClient, files: Uint8Array[], token: string) {
  let { call } = await seriesUploadCall(client, context.ids.northDraft);
  call = call.query({ progress: token });
  files.forEach((file, index) => {
    call = call.attach('files', Buffer.from(file), {
      filename: `STUDY/IM${String(index).padStart(4, '0')}`,
      contentType: 'application/dicom',
    });
  });
  return call;
}

async function post(client: ApiClient, path: string, body: unknown) {
  const headers = await rawRequestHeaders(client);
  return client.agent
    .post(path)
    .set(headers)
    .send(body as object);
}

describe('an upload holding a whole study', () => {
  it('lists both phases with their hints and sets the localizer and the dose report aside', async () => {
    const client = await presenter();
    const { files } = study();
    const token = randomUUID();
    const response = await uploadStudy(client, files, token);
    expect(response.status, JSON.stringify(response.body)).toBe(202);
    const listing = response.body as UploadListing;
    expect(listing.uploadId).toMatch(/^[0-9a-f-]{36}$/);
    expect(Date.parse(listing.expiresAt) - Date.now()).toBeGreaterThan(14 * 60_000);
    expect(listing.series).toEqual([
      {
        key: 's1',
        description: 'QXART Arterial Quill 2.5mm',
        modality: 'CT',
        seriesNumber: 4,
        sliceCount: 5,
        sliceThicknessMm: 2.5,
        orientation: 'axial',
        phaseHint: 'arterial',
        matrix: [32, 32],
        transferSyntaxName: 'Explicit VR Little Endian',
        isLossy: false,
      },
      {
        key: 's2',
        description: 'Portal venous 2.5mm',
        modality: 'CT',
        seriesNumber: 5,
        sliceCount: 6,
        sliceThicknessMm: 2.5,
        orientation: 'axial',
        phaseHint: 'portal venous',
        matrix: [32, 32],
        transferSyntaxName: 'Explicit VR Little Endian',
        isLossy: false,
      },
    ]);
    expect(listing.skipped).toEqual(
      expect.arrayContaining([
        { description: 'Localizer (series 1)', reason: expect.stringMatching(/localizer/) },
        { description: 'Dose report (series 997)', reason: 'not an image series' },
      ]),
    );
    expect(listing.skipped).toHaveLength(2);
    // Nothing is stored before the choice.
    expect(volumesStored()).toEqual([]);
    const em = context.app.orm.em.fork();
    expect(await em.count(ImageSeries, { clinicalCase: context.ids.northDraft })).toBe(0);
    expect(await em.count(UidReplacement, { clinicalCase: context.ids.northDraft })).toBe(0);
    const progress = await client.agent.get(`/api/upload-progress/${token}`);
    expect(progress.status).toBe(200);
    expect(progress.body as UploadProgress).toEqual({
      stage: 'done',
      files: { done: files.length, total: files.length },
      series: [],
    });
  });

  it('keeps the chosen phase and nothing of the rest: no volume, no UID replacement, no text', async () => {
    const client = await presenter();
    const { files, uids, arterialSopUids } = study();
    const listing = (await uploadStudy(client, files, randomUUID())).body as UploadListing;
    const venous = listing.series.find((series) => series.phaseHint === 'portal venous');
    const token = randomUUID();
    const kept = await post(client, `/api/uploads/${listing.uploadId}/keep?progress=${token}`, {
      keys: [venous?.key],
    });
    expect(kept.status, JSON.stringify(kept.body)).toBe(201);
    const [series] = kept.body as ImageSeriesView[];
    expect(kept.body).toHaveLength(1);
    expect(series).toMatchObject({
      modality: 'CT',
      sliceCount: 6,
      seriesNumber: 5,
      compression: {
        transferSyntaxUid: '1.2.840.10008.1.2.1',
        transferSyntaxName: 'Explicit VR Little Endian',
        isLossy: false,
        lossyRatio: null,
        lossyMethod: null,
      },
    });
    const progress = (await client.agent.get(`/api/upload-progress/${token}`))
      .body as UploadProgress;
    expect(progress).toEqual({
      stage: 'done',
      files: { done: 6, total: 6 },
      series: [{ key: venous?.key, description: 'Portal venous 2.5mm', done: 6, total: 6 }],
    });
    expect(volumesStored()).toHaveLength(1);
    const em = context.app.orm.em.fork();
    expect(await em.count(ImageSeries, { clinicalCase: context.ids.northDraft })).toBe(1);
    // The replacements made are those of the kept series; none for what was discarded.
    const keys = new CaseDeidentificationKeys(secret, context.ids.northDraft);
    const hashes = new Set(
      (await em.find(UidReplacement, { clinicalCase: context.ids.northDraft })).map(
        (row) => row.originalHash,
      ),
    );
    expect(hashes.has(keys.hashOfUid(uids.venousUid))).toBe(true);
    for (const discarded of [
      uids.arterialUid,
      uids.localizerUid,
      uids.reportUid,
      ...arterialSopUids,
    ]) {
      expect(hashes.has(keys.hashOfUid(discarded))).toBe(false);
    }
    const dump = databaseDump();
    for (const text of ['QXART', 'QXSCOUT', 'QXDOSE', 'QXREPORT', 'Quill']) {
      expect(dump).not.toContain(text);
    }
    // The upload is forgotten once kept.
    const again = await post(client, `/api/uploads/${listing.uploadId}/keep`, { keys: ['s1'] });
    expect(again.status).toBe(404);
  });

  it('keeps both phases when both are chosen, in one go', async () => {
    const client = await presenter();
    const listing = (await uploadStudy(client, study().files, randomUUID())).body as UploadListing;
    const kept = await post(client, `/api/uploads/${listing.uploadId}/keep`, {
      keys: ['s1', 's2'],
    });
    expect(kept.status).toBe(201);
    expect((kept.body as ImageSeriesView[]).map((series) => series.sliceCount)).toEqual([5, 6]);
    expect(volumesStored()).toHaveLength(2);
  });

  it('discards an upload without storing anything, and audits the listing and the discard', async () => {
    const client = await presenter();
    const listing = (await uploadStudy(client, study().files, randomUUID())).body as UploadListing;
    const headers = await rawRequestHeaders(client);
    const discarded = await client.agent.delete(`/api/uploads/${listing.uploadId}`).set(headers);
    expect(discarded.status).toBe(204);
    expect(volumesStored()).toEqual([]);
    const kept = await post(client, `/api/uploads/${listing.uploadId}/keep`, { keys: ['s1'] });
    expect(kept.status).toBe(404);
    const actions = (
      await context.app.orm.em
        .fork()
        .find(AuditEvent, { entityId: context.ids.northDraft }, { orderBy: { id: 'asc' } })
    ).map((event) => event.action);
    expect(actions).toEqual(
      expect.arrayContaining(['series.upload-listed', 'series.upload-discarded']),
    );
  });

  it('refuses an unknown key, an empty choice, and the upload of another user', async () => {
    const client = await presenter();
    const token = randomUUID();
    const listing = (await uploadStudy(client, study().files, token)).body as UploadListing;
    const unknown = await post(client, `/api/uploads/${listing.uploadId}/keep`, { keys: ['s9'] });
    expect(unknown.status).toBe(400);
    expect((unknown.body as { detail: string }).detail).toMatch(/no series "s9"; it offers s1, s2/);
    const empty = await post(client, `/api/uploads/${listing.uploadId}/keep`, { keys: [] });
    expect(empty.status).toBe(400);
    const other = new ApiClient(context.app.app);
    expect((await other.signIn('member@emberline.test', demoPassword)).status).toBe(200);
    const foreign = await post(other, `/api/uploads/${listing.uploadId}/keep`, { keys: ['s1'] });
    expect(foreign.status).toBe(404);
    // The presenter's own progress token is not another user's to read.
    expect((await other.agent.get(`/api/upload-progress/${token}`)).status).toBe(404);
    expect((await client.agent.get(`/api/upload-progress/${token}`)).status).toBe(200);
    expect(volumesStored()).toEqual([]);
  });

  it('refuses a keep holding a series stored already (409) before writing anything', async () => {
    const client = await presenter();
    const { files, uids } = study();
    // The portal-venous phase alone first (files 8–13): stored at once.
    const alone = await uploadStudy(client, files.slice(7), randomUUID());
    expect(alone.status, JSON.stringify(alone.body)).toBe(201);
    const replacementsBefore = await context.app.orm.em
      .fork()
      .count(UidReplacement, { clinicalCase: context.ids.northDraft });
    const listing = (await uploadStudy(client, files, randomUUID())).body as UploadListing;
    const both = await post(client, `/api/uploads/${listing.uploadId}/keep`, {
      keys: ['s1', 's2'],
    });
    expect(both.status).toBe(409);
    expect((both.body as { detail: string }).detail).toMatch(/stored for the case already/);
    expect(volumesStored()).toHaveLength(1);
    const em = context.app.orm.em.fork();
    expect(await em.count(UidReplacement, { clinicalCase: context.ids.northDraft })).toBe(
      replacementsBefore,
    );
    const keys = new CaseDeidentificationKeys(secret, context.ids.northDraft);
    const arterial = await em.findOne(UidReplacement, {
      clinicalCase: context.ids.northDraft,
      originalHash: keys.hashOfUid(uids.arterialUid),
    });
    expect(arterial).toBeNull();
    // The arterial phase alone can still be kept from the same listing.
    const arterialKept = await post(client, `/api/uploads/${listing.uploadId}/keep`, {
      keys: ['s1'],
    });
    expect(arterialKept.status).toBe(201);
  });

  it('still stores a single series at once (201), its localizer and report set aside', async () => {
    const client = await presenter();
    const { files } = study();
    // Localizer (1 file), arterial (5), dose report (1): the arterial phase only is an image series.
    const response = await uploadStudy(client, files.slice(0, 7), randomUUID());
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect((response.body as ImageSeriesView).sliceCount).toBe(5);
  });
});
