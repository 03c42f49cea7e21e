/**
 * Key images through the API: who keeps them (the clinical members of the case's board, until
 * the decision), who sees them (whoever sees the case; another board 404), who removes them
 * (the author only), what the PNG must be, what is stored (no text chunks), and the audit.
 *
 * Outside references (cited by section):
 * - PNG specification (W3C, 3rd edition): §5.2 the signature, §5.3 chunk layout and CRC-32,
 *   §11.2.2 IHDR (width and height as 4-byte big-endian integers), §11.3.3 the text chunks
 *   tEXt, zTXt, iTXt (free text: an author, a comment, a file name). The test PNGs are written
 *   by those sections (key-image-png.ts) and the stored ones read back with png-js, the decoder
 *   pdfkit uses, as the independent reference.
 * - RFC 9110 §15.3.2 201, §15.3.5 204, §15.5.1 400, §15.5.4 403, §15.5.5 404, §15.5.10 409,
 *   §15.5.14 413; RFC 9457 §3 problem details; RFC 7578 multipart/form-data.
 * - OWASP ASVS 5.0 §8: a case out of reach answers 404, as one that does not exist.
 * Product rules (DEVELOPERS.md "Roles" and "States"; annotations/README.md): the clinical
 * members of the board make the board's discussion artefacts; from `decided` on they stay.
 */
import { mkdtempSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  AuditAction,
  BoardMemberView,
  CaseStatus,
  KeyImageView,
  ProblemDetails,
} from '@emberline/shared';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { setEnvironment } from './imaging-fixtures';
import {
  chunk,
  chunkTypes,
  concat,
  decodeWithPngJs,
  ihdr,
  pngSignature,
  rgbaPng,
  textChunk,
} from './key-image-png';
import { insertSeriesRow } from './plan-fixtures';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-key-images-test-'));
let restoreEnvironment: () => void = () => undefined;
let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;
let member: ApiClient;
let proceduralist: ApiClient;
let coordinator: ApiClient;
let admin: ApiClient;
let south: ApiClient;
let readySeries: string;
let draftSeries: string;
let decidedSeries: string;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

async function csrfToken(client: ApiClient): Promise<string> {
  const access = { domain: '127.0.0.1', path: '/', secure: false, script: true };
  if (!client.agent.jar.getCookie('XSRF-TOKEN', access)) await client.get('/api/health');
  const cookie = client.agent.jar.getCookie('XSRF-TOKEN', access);
  if (!cookie) throw new Error('the server set no XSRF-TOKEN cookie');
  return cookie.value;
}

const viewState = {
  cursorLps: [4.5, 5, 5.5],
  sliceIndex: 5,
  window: { width: 400, level: 50 },
  camera: null,
  hiddenLabels: [3],
  labelOpacity: 0.45,
  planId: null,
  zones: [],
};

/** A gradient with one red pixel in the corner: a picture whose pixels can be checked. */
const picture = rgbaPng(32, 24, (x, y) =>
  x === 0 && y === 0 ? [255, 0, 0, 255] : [x * 8, y * 10, 90, 255],
);

/** POST /api/cases/:id/key-images, multipart as the viewer sends it. */
async function keep(
  client: ApiClient,
  caseId: string,
  options: { png?: Uint8Array; meta?: object | string; seriesId?: string } = {},
) {
  const meta = options.meta ?? {
    seriesId: options.seriesId ?? readySeries,
    pane: 'axial',
    caption: 'Tumour against the portal branch',
    viewState,
  };
  return client.agent
    .post(`/api/cases/${caseId}/key-images`)
    .set('Host', '127.0.0.1')
    .set('X-XSRF-TOKEN', await csrfToken(client))
    .attach('image', Buffer.from(options.png ?? picture), {
      filename: 'view.png',
      contentType: 'image/png',
    })
    .field('meta', typeof meta === 'string' ? meta : JSON.stringify(meta));
}

const problem = (response: { body: unknown }) => response.body as ProblemDetails;
const auditCount = (action: AuditAction, entityId: string) =>
  testApp.orm.em.fork().count(AuditEvent, { action, entityId });
const storedFiles = () => {
  try {
    return readdirSync(join(fileStoreDir, 'key-images')).filter((name) => name.endsWith('.png'));
  } catch {
    return [];
  }
};

async function setCaseStatus(caseId: string, status: CaseStatus) {
  const em = testApp.orm.em.fork();
  (await em.findOneOrFail(ClinicalCase, caseId)).status = status;
  await em.flush();
}

beforeAll(async () => {
  restoreEnvironment = setEnvironment({
    FILE_STORE_DIR: fileStoreDir,
    DEIDENTIFICATION_SECRET: 'key-images-test-secret-0c1d2e3f4a5b6c7d8e9f',
  });
  testApp = await startTestApp();
  ids = await resetToDemo(testApp.orm);
  presenter = await signedIn('presenter@emberline.test');
  member = await signedIn('member@emberline.test');
  proceduralist = await signedIn('proceduralist@emberline.test');
  coordinator = await signedIn('coordinator@emberline.test');
  admin = await signedIn('admin@emberline.test');
  south = await signedIn('south@emberline.test');
  const members = (await member.get(`/api/boards/${ids.northBoard}/members`))
    .body as BoardMemberView[];
  const presenterId = members.find((m) => m.email === 'presenter@emberline.test')?.userId ?? '';
  readySeries = await insertSeriesRow(testApp.orm, ids.northReady, presenterId);
  draftSeries = await insertSeriesRow(testApp.orm, ids.northDraft, presenterId);
  decidedSeries = await insertSeriesRow(testApp.orm, ids.northDecided, presenterId);
});

afterAll(async () => {
  await testApp?.close();
  restoreEnvironment();
});

describe('keeping a view', () => {
  it('stores the PNG without its text chunks and answers 201 with the view', async () => {
    const tagged = rgbaPng(
      32,
      24,
      (x, y) => (x === 0 && y === 0 ? [255, 0, 0, 255] : [x * 8, y * 10, 90, 255]),
      [
        textChunk('Author', 'Quill Marguerite'),
        chunk('tIME', Uint8Array.from([7, 234, 12, 2, 10, 0, 0])),
      ],
    );
    expect(chunkTypes(tagged)).toEqual(['IHDR', 'tEXt', 'tIME', 'IDAT', 'IEND']);
    const response = await keep(member, ids.northReady, { png: tagged });
    expect(response.status).toBe(201);
    const view = response.body as KeyImageView;
    expect(response.headers.location).toBe(`/api/key-images/${view.id}`);
    expect(view).toMatchObject({
      caseId: ids.northReady,
      seriesId: readySeries,
      pane: 'axial',
      caption: 'Tumour against the portal branch',
      viewState,
      widthPx: 32,
      heightPx: 24,
      author: { displayName: expect.any(String) },
      imageUrl: `/api/key-images/${view.id}/image.png`,
      canDelete: true,
    });

    const image = await member.get(view.imageUrl).buffer(true);
    expect(image.status).toBe(200);
    expect(image.headers['content-type']).toBe('image/png');
    expect(image.headers['cache-control']).toContain('no-store');
    const stored = new Uint8Array(image.body as Buffer);
    expect(view.bytes).toBe(stored.length);
    // PNG §11.3.3: the text chunk and the time stamp are dropped, the picture kept.
    expect(chunkTypes(stored)).toEqual(['IHDR', 'IDAT', 'IEND']);
    expect(Buffer.from(stored).includes('Quill')).toBe(false);
    const decoded = await decodeWithPngJs(stored);
    const reference = await decodeWithPngJs(picture);
    expect([decoded.width, decoded.height]).toEqual([32, 24]);
    expect(Array.from(decoded.pixels.subarray(0, 4))).toEqual([255, 0, 0, 255]);
    expect(decoded.pixels).toEqual(reference.pixels);

    expect(await auditCount('key-image.create', view.id)).toBe(1);
    expect(await auditCount('key-image.read', view.id)).toBe(1);
    const created = await testApp.orm.em
      .fork()
      .findOneOrFail(AuditEvent, { action: 'key-image.create', entityId: view.id });
    expect(created.detail).toMatchObject({
      caseId: ids.northReady,
      droppedChunks: ['tEXt', 'tIME'],
    });
  });

  it('lets the presenting physician, board members and proceduralists of the board keep views', async () => {
    expect((await keep(presenter, ids.northReady)).status).toBe(201);
    expect((await keep(proceduralist, ids.northReady)).status).toBe(201);
    expect((await keep(presenter, ids.northDraft, { seriesId: draftSeries })).status).toBe(201);
  });

  it('answers 404 to another board and to administrators, 403 to a nurse coordinator', async () => {
    expect((await keep(south, ids.northReady)).status).toBe(404);
    expect((await keep(admin, ids.northReady)).status).toBe(404);
    // Before the decision the coordinator does not see the case; after it they may not keep.
    expect((await keep(coordinator, ids.northReady)).status).toBe(404);
    expect((await keep(coordinator, ids.northDecided, { seriesId: decidedSeries })).status).toBe(
      403,
    );
  });

  it('refuses a view on a decided case (409)', async () => {
    const response = await keep(member, ids.northDecided, { seriesId: decidedSeries });
    expect(response.status).toBe(409);
  });

  it('refuses what is not a PNG, naming the image field (400)', async () => {
    const jpegStart = Uint8Array.from([0xff, 0xd8, 0xff, 0xe0, 0, 16, 74, 70, 73, 70, 0]);
    const response = await keep(member, ids.northReady, { png: jpegStart });
    expect(response.status).toBe(400);
    expect(problem(response).errors?.[0]?.path).toBe('image');
    expect(problem(response).detail).toMatch(/PNG signature/);
  });

  it('refuses a PNG cut short, or with a damaged chunk (CRC), or without IHDR first (400)', async () => {
    const cut = picture.subarray(0, picture.length - 20);
    expect((await keep(member, ids.northReady, { png: cut })).status).toBe(400);
    const damaged = picture.slice();
    damaged[pngSignature.length + 8 + 2] ^= 0x01; // a byte of IHDR's width
    const answer = await keep(member, ids.northReady, { png: damaged });
    expect(answer.status).toBe(400);
    expect(problem(answer).detail).toMatch(/CRC/);
    const noHeader = concat([pngSignature, chunk('IEND', new Uint8Array())]);
    expect((await keep(member, ids.northReady, { png: noHeader })).status).toBe(400);
  });

  it('refuses a picture larger than 4096 × 4096 by its IHDR (400), naming its size', async () => {
    // IHDR says 4097 × 10; the data need not be complete for the refusal.
    const tooWide = concat([
      pngSignature,
      ihdr(4097, 10),
      chunk('IDAT', new Uint8Array([120, 156, 3, 0, 0, 0, 0, 1])),
      chunk('IEND', new Uint8Array()),
    ]);
    const response = await keep(member, ids.northReady, { png: tooWide });
    expect(response.status).toBe(400);
    expect(problem(response).detail).toContain('4097 × 10');
  });

  it('refuses a file over 8 MiB (413) and stores nothing', async () => {
    const before = storedFiles().length;
    const oversize = new Uint8Array(8 * 1024 * 1024 + 1);
    oversize.set(picture);
    const response = await keep(member, ids.northReady, { png: oversize });
    expect(response.status).toBe(413);
    expect(storedFiles().length).toBe(before);
  });

  it('checks the description: JSON, a series of the case, the pane, a caption of at most 200 characters', async () => {
    const notJson = await keep(member, ids.northReady, { meta: '{pane:' });
    expect(notJson.status).toBe(400);
    expect(problem(notJson).errors?.[0]?.path).toBe('meta');
    const otherSeries = await keep(member, ids.northReady, { seriesId: draftSeries });
    expect(otherSeries.status).toBe(400);
    expect(problem(otherSeries).errors?.[0]?.path).toBe('meta.seriesId');
    const badPane = await keep(member, ids.northReady, {
      meta: { seriesId: readySeries, pane: 'oblique', viewState },
    });
    expect(badPane.status).toBe(400);
    expect(problem(badPane).errors?.[0]?.path).toBe('meta.pane');
    const longCaption = await keep(member, ids.northReady, {
      meta: { seriesId: readySeries, pane: '3d', caption: 'x'.repeat(201), viewState },
    });
    expect(longCaption.status).toBe(400);
    expect(problem(longCaption).errors?.[0]?.path).toBe('meta.caption');
    const badState = await keep(member, ids.northReady, {
      meta: {
        seriesId: readySeries,
        pane: 'axial',
        viewState: { ...viewState, hiddenLabels: Array.from({ length: 300 }, (_, i) => i) },
      },
    });
    expect(badState.status).toBe(400);
    expect(problem(badState).errors?.[0]?.path).toBe('meta.viewState.hiddenLabels');
  });

  it('refuses a body that is not multipart (415)', async () => {
    const response = await member.post(`/api/cases/${ids.northReady}/key-images`, {
      image: 'iVBORw0KGgo=',
    });
    expect(response.status).toBe(415);
  });
});

describe('listing and removing', () => {
  it('lists oldest first, each with whether the reader may remove it; audited', async () => {
    const response = await member.get(`/api/cases/${ids.northReady}/key-images`);
    expect(response.status).toBe(200);
    const list = response.body as KeyImageView[];
    expect(list.length).toBeGreaterThanOrEqual(3);
    const times = list.map((image) => image.createdAt);
    expect(times).toEqual([...times].sort());
    for (const image of list) {
      expect(image.canDelete).toBe(image.author.id === list[0].author.id);
    }
    const presenterList = (await presenter.get(`/api/cases/${ids.northReady}/key-images`))
      .body as KeyImageView[];
    expect(presenterList.filter((image) => image.canDelete).length).toBe(1);
    expect(await auditCount('key-images.list', ids.northReady)).toBeGreaterThanOrEqual(2);
  });

  it('hides the list and the pictures from another board (404)', async () => {
    const [first] = (await member.get(`/api/cases/${ids.northReady}/key-images`))
      .body as KeyImageView[];
    expect((await south.get(`/api/cases/${ids.northReady}/key-images`)).status).toBe(404);
    expect((await south.get(first.imageUrl)).status).toBe(404);
    expect((await south.delete(`/api/key-images/${first.id}`)).status).toBe(404);
    expect((await admin.get(first.imageUrl)).status).toBe(404);
    expect((await member.get('/api/key-images/not-an-id/image.png')).status).toBe(404);
  });

  it('lets only the author remove a key image (others 403; 204), and its file goes', async () => {
    const kept = (await keep(presenter, ids.northReady)).body as KeyImageView;
    const before = storedFiles().length;
    expect((await member.delete(`/api/key-images/${kept.id}`)).status).toBe(403);
    expect((await proceduralist.delete(`/api/key-images/${kept.id}`)).status).toBe(403);
    const removed = await presenter.delete(`/api/key-images/${kept.id}`);
    expect(removed.status).toBe(204);
    expect(storedFiles().length).toBe(before - 1);
    expect((await presenter.get(kept.imageUrl)).status).toBe(404);
    expect(await auditCount('key-image.delete', kept.id)).toBe(1);
    expect((await presenter.delete(`/api/key-images/${kept.id}`)).status).toBe(404);
  });

  it('keeps the key images of a decided case as they were (409) and offers no removal', async () => {
    const kept = (await keep(member, ids.northReady)).body as KeyImageView;
    await setCaseStatus(ids.northReady, 'decided');
    try {
      expect((await member.delete(`/api/key-images/${kept.id}`)).status).toBe(409);
      const list = (await member.get(`/api/cases/${ids.northReady}/key-images`))
        .body as KeyImageView[];
      expect(list.some((image) => image.canDelete)).toBe(false);
      // The nurse coordinator reads them once decided.
      expect((await coordinator.get(`/api/cases/${ids.northReady}/key-images`)).status).toBe(200);
      expect((await coordinator.get(kept.imageUrl)).status).toBe(200);
    } finally {
      await setCaseStatus(ids.northReady, 'ready-for-board');
    }
  });

  it('removes the files of a deleted draft case with it', async () => {
    const kept = await keep(presenter, ids.northDraft, { seriesId: draftSeries });
    expect(kept.status).toBe(201);
    const before = storedFiles().length;
    const draftImages = (await presenter.get(`/api/cases/${ids.northDraft}/key-images`))
      .body as KeyImageView[];
    expect((await presenter.delete(`/api/cases/${ids.northDraft}`)).status).toBe(204);
    expect(storedFiles().length).toBe(before - draftImages.length);
  });
});
