/**
 * Tumour structures linked to the lesions of the case's Summary: the suggestion stored on
 * import and when lesions change, the presenter's confirmation, and its rules. The oracle is the
 * invented CT's manifest (sample-data/): its segment VIII tumour is a sphere of radius 12 mm,
 * its segment VI tumour one of 9 mm, and the demo case NLB-2026-014 lists lesions "VIII, 24 mm"
 * and "VI, 18 mm" — invented to match, independently of the suggestion code.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type {
  CaseDetail,
  ImageSeriesView,
  LesionView,
  ProblemDetails,
  StructureImportResult,
  StructureView,
} from '@emberline/shared';
import { generateAbdomenCt } from '../../sample-data/generate-abdomen-ct';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { setEnvironment, uploadFiles } from './imaging-fixtures';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-lesion-links-test-'));
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'lesion-links-test-secret-3f9a0c2d7e6b4a18',
  IMAGING_READ_TIMEOUT_MS: '20000',
};

const generated = generateAbdomenCt();
const { manifest } = generated;
const labelsJson = JSON.stringify(generated.labels);
/** The manifest's tumours by Couinaud segment: label values 2 (VIII) and 3 (VI). */
const tumourLabelOf = (segment: string) => {
  const tumour = manifest.tumours.find((entry) => entry.couinaudSegment === segment);
  if (!tumour) throw new Error(`the sample CT has no segment ${segment} tumour`);
  return tumour.labelValue;
};

let restoreEnvironment: () => void = () => undefined;
let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;
let series: ImageSeriesView;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  const response = await client.signIn(email, demoPassword);
  expect(response.status).toBe(200);
  return client;
}

async function csrfToken(client: ApiClient): Promise<string> {
  const access = { domain: '127.0.0.1', path: '/', secure: false, script: true };
  if (!client.agent.jar.getCookie('XSRF-TOKEN', access)) await client.get('/api/health');
  const cookie = client.agent.jar.getCookie('XSRF-TOKEN', access);
  if (!cookie) throw new Error('the server set no XSRF-TOKEN cookie');
  return cookie.value;
}

/** POST /api/series/:id/structures with the sample's label map and its kinds. */
async function importSample(): Promise<StructureView[]> {
  const response = await presenter.agent
    .post(`/api/series/${series.id}/structures`)
    .set('Host', '127.0.0.1')
    .set('X-XSRF-TOKEN', await csrfToken(presenter))
    .attach('file', Buffer.from(generated.labelMapNiftiGz), {
      filename: 'labels.nii.gz',
      contentType: 'application/octet-stream',
    })
    .field('labels', labelsJson);
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  return (response.body as StructureImportResult).structures;
}

async function listed(client = presenter): Promise<StructureView[]> {
  const response = await client.get(`/api/series/${series.id}/structures`);
  expect(response.status).toBe(200);
  return response.body as StructureView[];
}

const byLabel = (structures: StructureView[], labelValue: number): StructureView => {
  const found = structures.find((entry) => entry.labelValue === labelValue);
  if (!found) throw new Error(`label ${labelValue} missing`);
  return found;
};

async function lesionsOf(caseId: string, client = presenter): Promise<LesionView[]> {
  const response = await client.get(`/api/cases/${caseId}`);
  expect(response.status).toBe(200);
  return (response.body as CaseDetail).lesions;
}

const lesionIn = (lesions: LesionView[], segment: string, diameterMm: number) => {
  const found = lesions.find((l) => l.segment === segment && l.diameterMm === diameterMm);
  if (!found) throw new Error(`no lesion ${segment} ${diameterMm} mm`);
  return found;
};

const problemOf = (response: { body: unknown }) => response.body as ProblemDetails;

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  testApp = await startTestApp();
}, 60_000);

beforeEach(async () => {
  ids = await resetToDemo(testApp.orm);
  presenter = await signedIn('presenter@emberline.test');
  const upload = await uploadFiles(
    presenter,
    ids.northReady,
    generated.slices.map((slice) => new Uint8Array(slice)),
  );
  expect(upload.status, JSON.stringify(upload.body)).toBe(201);
  series = upload.body as ImageSeriesView;
}, 60_000);

afterAll(async () => {
  await testApp.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
});

describe('the suggestion (size first, position breaking near-ties)', () => {
  it('links each tumour to the lesion of its size on import, unconfirmed', async () => {
    const structures = await importSample();
    const lesions = await lesionsOf(ids.northReady);
    const viii = byLabel(structures, tumourLabelOf('VIII'));
    const vi = byLabel(structures, tumourLabelOf('VI'));
    expect(viii).toMatchObject({
      lesionId: lesionIn(lesions, 'VIII', 24).id,
      lesionLabel: 'segment VIII, 24 mm',
      isLesionConfirmed: false,
    });
    expect(vi).toMatchObject({
      lesionId: lesionIn(lesions, 'VI', 18).id,
      lesionLabel: 'segment VI, 18 mm',
      isLesionConfirmed: false,
    });
    for (const other of structures.filter((entry) => entry.kind !== 'tumour')) {
      expect(other.lesionId, other.name).toBeNull();
    }
    expect(await listed()).toEqual(structures);
    const [event] = await testApp.orm.em
      .fork()
      .find(
        AuditEvent,
        { entityId: series.id, action: 'structures.import' },
        { orderBy: { at: 'desc' }, limit: 1 },
      );
    expect(event.detail).toMatchObject({ suggestedLinks: 2 });
  });

  it('decides by position between two lesions of the same size', async () => {
    await importSample();
    for (const lesion of await lesionsOf(ids.northReady)) {
      const removed = await presenter.delete(`/api/cases/${ids.northReady}/lesions/${lesion.id}`);
      expect(removed.status).toBe(200);
    }
    // 21 mm fits the 24 mm and the 18 mm tumour equally badly (12.5 % and 14 %): only where
    // they lie in the liver tells segment VI (right, posterior, inferior) from VIII.
    for (const segment of ['VI', 'VIII']) {
      const added = await presenter.post(`/api/cases/${ids.northReady}/lesions`, {
        segment,
        diameterMm: 21,
        kind: 'hcc',
      });
      expect(added.status, JSON.stringify(added.body)).toBe(201);
    }
    const structures = await listed();
    expect(byLabel(structures, tumourLabelOf('VIII')).lesionLabel).toBe('segment VIII, 21 mm');
    expect(byLabel(structures, tumourLabelOf('VI')).lesionLabel).toBe('segment VI, 21 mm');
  });
});

describe('confirming a link (PATCH /api/structures/:id)', () => {
  it('confirms another lesion than suggested, re-suggests the rest, and audits it', async () => {
    const structures = await importSample();
    const lesions = await lesionsOf(ids.northReady);
    const small = byLabel(structures, tumourLabelOf('VI'));
    const response = await presenter.patch(`/api/structures/${small.id}`, {
      lesionId: lesionIn(lesions, 'VIII', 24).id,
      isLesionConfirmed: true,
    });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body).toMatchObject({
      lesionLabel: 'segment VIII, 24 mm',
      isLesionConfirmed: true,
    });
    // The VIII lesion is taken: the 24 mm tumour falls back to the VI lesion (within a factor
    // of two of its size).
    const after = await listed();
    expect(byLabel(after, tumourLabelOf('VIII'))).toMatchObject({
      lesionLabel: 'segment VI, 18 mm',
      isLesionConfirmed: false,
    });
    const [event] = await testApp.orm.em
      .fork()
      .find(AuditEvent, { entityId: small.id, action: 'structure.lesion-link' });
    expect(event.detail).toMatchObject({
      lesionId: lesionIn(lesions, 'VIII', 24).id,
      isLesionConfirmed: true,
      suggestionsChanged: 1,
    });
  });

  it('never overwrites a confirmed link: not on a new import, nor when lesions change', async () => {
    const structures = await importSample();
    const lesions = await lesionsOf(ids.northReady);
    const small = byLabel(structures, tumourLabelOf('VI'));
    const chosen = lesionIn(lesions, 'VIII', 24);
    expect(
      (
        await presenter.patch(`/api/structures/${small.id}`, {
          lesionId: chosen.id,
          isLesionConfirmed: true,
        })
      ).status,
    ).toBe(200);
    await importSample();
    // A lesion of the small tumour's very size: the suggestion would pick it, but the link is
    // confirmed.
    const added = await presenter.post(`/api/cases/${ids.northReady}/lesions`, {
      segment: 'VI',
      diameterMm: 18.4,
      kind: 'hcc',
    });
    expect(added.status).toBe(201);
    const after = await listed();
    expect(byLabel(after, tumourLabelOf('VI'))).toMatchObject({
      lesionId: chosen.id,
      isLesionConfirmed: true,
    });
    // The large tumour, unconfirmed, takes the closest free size: 18.4 mm rather than 18 mm.
    const closest = lesionIn((added.body as CaseDetail).lesions, 'VI', 18.4);
    expect(byLabel(after, tumourLabelOf('VIII'))).toMatchObject({
      lesionId: closest.id,
      isLesionConfirmed: false,
    });
  });

  it('confirms that a tumour shows none of the lesions, and releases it back to the suggestion', async () => {
    const structures = await importSample();
    const large = byLabel(structures, tumourLabelOf('VIII'));
    const none = await presenter.patch(`/api/structures/${large.id}`, {
      lesionId: null,
      isLesionConfirmed: true,
    });
    expect(none.status, JSON.stringify(none.body)).toBe(200);
    expect(none.body).toMatchObject({ lesionId: null, isLesionConfirmed: true });
    await importSample();
    expect(byLabel(await listed(), large.labelValue)).toMatchObject({
      lesionId: null,
      isLesionConfirmed: true,
    });
    const released = await presenter.patch(`/api/structures/${large.id}`, {
      isLesionConfirmed: false,
    });
    expect(released.status).toBe(200);
    expect(released.body).toMatchObject({
      lesionLabel: 'segment VIII, 24 mm',
      isLesionConfirmed: false,
    });
  });

  it('drops a confirmed link when its lesion is removed from the Summary and suggests anew', async () => {
    const structures = await importSample();
    const lesions = await lesionsOf(ids.northReady);
    const large = byLabel(structures, tumourLabelOf('VIII'));
    const viii = lesionIn(lesions, 'VIII', 24);
    await presenter.patch(`/api/structures/${large.id}`, {
      lesionId: viii.id,
      isLesionConfirmed: true,
    });
    const removed = await presenter.delete(`/api/cases/${ids.northReady}/lesions/${viii.id}`);
    expect(removed.status).toBe(200);
    const after = await listed();
    // The 24 mm tumour now fits the 18 mm lesion best, but the 18 mm tumour fits it better:
    // the one-to-one assignment gives it to the small tumour and the large one goes without.
    expect(byLabel(after, tumourLabelOf('VIII'))).toMatchObject({
      lesionId: null,
      isLesionConfirmed: false,
    });
    expect(byLabel(after, tumourLabelOf('VI')).lesionLabel).toBe('segment VI, 18 mm');
  });
});

describe('the rules of a link', () => {
  it('lets only the presenting physician change it (403 member, 404 other board)', async () => {
    const structures = await importSample();
    const [lesion] = await lesionsOf(ids.northReady);
    const tumour = byLabel(structures, tumourLabelOf('VIII'));
    const body = { lesionId: lesion.id, isLesionConfirmed: true };
    const member = await signedIn('member@emberline.test');
    expect((await member.patch(`/api/structures/${tumour.id}`, body)).status).toBe(403);
    expect(byLabel(await listed(member), tumour.labelValue).isLesionConfirmed).toBe(false);
    const south = await signedIn('south@emberline.test');
    expect((await south.patch(`/api/structures/${tumour.id}`, body)).status).toBe(404);
  });

  it('refuses a lesion of another case with 400, as it refuses one that does not exist', async () => {
    const structures = await importSample();
    const tumour = byLabel(structures, tumourLabelOf('VIII'));
    const [otherCaseLesion] = await lesionsOf(ids.northDraft);
    for (const lesionId of [otherCaseLesion.id, '5c1f7a52-86a1-4a8e-9a57-0f3d8d1e2b44']) {
      const response = await presenter.patch(`/api/structures/${tumour.id}`, {
        lesionId,
        isLesionConfirmed: true,
      });
      expect(response.status).toBe(400);
      expect(problemOf(response).detail).toContain('not one of this case’s lesions');
    }
    expect(byLabel(await listed(), tumour.labelValue).isLesionConfirmed).toBe(false);
  });

  it('refuses with 409 a link of a structure that is not a tumour, and a lesion confirmed twice', async () => {
    const structures = await importSample();
    const lesions = await lesionsOf(ids.northReady);
    const liver = structures.find((entry) => entry.kind === 'liver');
    if (!liver) throw new Error('the sample has no liver');
    const viii = lesionIn(lesions, 'VIII', 24);
    const onLiver = await presenter.patch(`/api/structures/${liver.id}`, {
      lesionId: viii.id,
      isLesionConfirmed: true,
    });
    expect(onLiver.status).toBe(409);
    expect(problemOf(onLiver).detail).toContain('Only a tumour is linked');
    const large = byLabel(structures, tumourLabelOf('VIII'));
    const small = byLabel(structures, tumourLabelOf('VI'));
    const body = { lesionId: viii.id, isLesionConfirmed: true };
    expect((await presenter.patch(`/api/structures/${large.id}`, body)).status).toBe(200);
    const twice = await presenter.patch(`/api/structures/${small.id}`, body);
    expect(twice.status).toBe(409);
    expect(problemOf(twice).detail).toContain('already confirmed for label');
  });

  it('refuses with 400 a lesion without a confirmation and a confirmation without a lesion', async () => {
    const structures = await importSample();
    const [lesion] = await lesionsOf(ids.northReady);
    const tumour = byLabel(structures, tumourLabelOf('VIII'));
    const unconfirmed = await presenter.patch(`/api/structures/${tumour.id}`, {
      lesionId: lesion.id,
    });
    expect(unconfirmed.status).toBe(400);
    expect(problemOf(unconfirmed).detail).toContain('isLesionConfirmed');
    const bare = await presenter.patch(`/api/structures/${tumour.id}`, {
      isLesionConfirmed: true,
    });
    expect(bare.status).toBe(400);
    expect(problemOf(bare).detail).toContain('lesionId');
  });

  it('clears the link of a tumour remapped to another kind', async () => {
    const structures = await importSample();
    const tumour = byLabel(structures, tumourLabelOf('VIII'));
    const response = await presenter.patch(`/api/structures/${tumour.id}`, { kind: 'bowel' });
    expect(response.status).toBe(200);
    expect(response.body).toMatchObject({ kind: 'bowel', lesionId: null });
  });
});
