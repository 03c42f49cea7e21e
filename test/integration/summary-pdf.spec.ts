/**
 * The board summary PDF (server/src/modules/summary-pdf/README.md), read back by an independent
 * reader: Debian's poppler-utils (`pdftotext` for the text, one form feed between pages;
 * `pdfinfo` for the page count; `pdffonts` for the embedded fonts), installed by `npm test`
 * (`ensurePdfTools` in server/scripts/setup.mjs). Expected values come from the API the case
 * file and the plan comparison read (assessment views, case detail, decision), never typed in.
 *
 * The demo plans of NLB-2026-014 are assessed for real by the engine here (as in
 * assessments.spec.ts); NLB-2026-022 carries the signed decision and tally of the demo's closed
 * meeting (demo-meetings.spec.ts).
 *
 * Key images: three PNGs written by the PNG specification (key-image-png.ts) are kept on
 * NLB-2026-014 through the API; `pdfimages -list` (poppler-utils) reads back the images the PDF
 * embeds, with their pixel sizes, and `pdftotext` their captions.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  clinicalCaution,
  treatmentLabels,
  verdictLevelLabels,
  type AssessmentView,
  type CaseDetail,
  type DecisionView,
  type ImageSeriesView,
  type KeyImageView,
  type PlanView,
} from '@emberline/shared';
import { INVENTED_PATIENT } from '../../sample-data/abdomen/write-dicom';
import { seedDemoImaging } from '../../server/seeders/demo-imaging';
import { seedDemoMeetings } from '../../server/seeders/demo-meetings';
import { seedDemoPlans } from '../../server/seeders/demo-plans';
import { type AssessmentRuntime } from '../../server/src/modules/assessments/assessment-runtime';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { User } from '../../server/src/modules/users/user.entity';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { ApiClient, startTestAppWithAssessments, type TestApp } from '../support/test-app';
import { setEnvironment } from './imaging-fixtures';
import { rgbaPng } from './key-image-png';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-summary-pdf-test-'));
const pdfDir = mkdtempSync(join(tmpdir(), 'emberline-summary-pdf-read-'));
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'summary-pdf-test-secret-4f7a9c2e61b0d835',
  IMAGING_READ_TIMEOUT_MS: '20000',
};

let restoreEnvironment: () => void = () => undefined;
let testApp: TestApp;
let runtime: AssessmentRuntime;
let ids: DemoIds;
let presenter: ApiClient;
let member: ApiClient;
const assessed = new Map<string, AssessmentView>();
let plans: PlanView[];

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

/** Polls GET /api/assessments/:id until it is done or failed. */
async function settled(id: string, timeoutMs = 300_000): Promise<AssessmentView> {
  const startedAt = Date.now();
  for (;;) {
    const view = (await presenter.get(`/api/assessments/${id}`)).body as AssessmentView;
    if (view.status === 'done' || view.status === 'failed') return view;
    if (Date.now() - startedAt > timeoutMs) throw new Error(`assessment ${id} ${view.status}`);
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
}

interface ReadPdf {
  status: number;
  contentType: string;
  bytes: Buffer;
  /** pdftotext's text of each page (it ends every page with a form feed). */
  pages: string[];
  /** Every run of white space made one space, so that wrapped lines read as one. */
  flat: string;
  pageCount: number;
  info: string;
  fonts: string;
}

/** Downloads the summary and reads it back with poppler-utils. */
async function summaryOf(client: ApiClient, caseId: string): Promise<ReadPdf> {
  const response = await client
    .get(`/api/cases/${caseId}/summary.pdf`)
    .buffer(true)
    .parse((res, done) => {
      const chunks: Buffer[] = [];
      res.on('data', (chunk: Buffer) => chunks.push(chunk));
      res.on('end', () => done(null, Buffer.concat(chunks)));
    });
  expect(response.status, String(response.body)).toBe(200);
  const bytes = response.body as Buffer;
  const file = join(pdfDir, `${caseId}.pdf`);
  writeFileSync(file, bytes);
  const text = execFileSync('pdftotext', ['-enc', 'UTF-8', file, '-'], { encoding: 'utf8' });
  const info = execFileSync('pdfinfo', [file], { encoding: 'utf8' });
  const pageCount = Number(/^Pages:\s+(\d+)$/m.exec(info)?.[1]);
  const pages = text.split('\f').slice(0, -1);
  return {
    status: response.status,
    contentType: String(response.headers['content-type']),
    bytes,
    pages,
    flat: flat(text),
    pageCount,
    info,
    fonts: execFileSync('pdffonts', [file], { encoding: 'utf8' }),
  };
}

const flat = (text: string) => text.replace(/\s+/g, ' ');
const occurrences = (text: string, what: string) => text.split(what).length - 1;

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  ({ testApp, runtime } = await startTestAppWithAssessments({
    isWorking: true,
    fileStoreDir,
    pool: { threads: 1 },
  }));
  ids = await resetToDemo(testApp.orm);
  expect(await seedDemoImaging(testApp.orm.em.fork())).toBe(true);
  expect(await seedDemoPlans(testApp.orm.em.fork())).toBe(true);
  expect(await seedDemoMeetings(testApp.orm.em.fork())).toBe(true);
  presenter = await signedIn('presenter@emberline.test');
  member = await signedIn('member@emberline.test');
  plans = (await presenter.get(`/api/cases/${ids.northReady}/plans`)).body as PlanView[];
  expect(plans.length).toBeGreaterThan(0);
  for (const plan of plans) {
    const response = await presenter.post(`/api/plans/${plan.id}/assessments`);
    expect(response.status, JSON.stringify(response.body)).toBe(202);
    assessed.set(plan.id, await settled((response.body as AssessmentView).id));
  }
}, 900_000);

afterAll(async () => {
  await runtime?.close();
  await testApp?.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
  rmSync(pdfDir, { recursive: true, force: true });
});

describe('the board summary of the demo case with assessed plans (NLB-2026-014)', () => {
  let pdf: ReadPdf;
  let detail: CaseDetail;

  beforeAll(async () => {
    pdf = await summaryOf(member, ids.northReady);
    detail = (await member.get(`/api/cases/${ids.northReady}`)).body as CaseDetail;
  });

  it('is a PDF (ISO 32000: the file starts with %PDF-) whose fonts are embedded', () => {
    expect(pdf.contentType).toContain('application/pdf');
    expect(pdf.bytes.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    // pdffonts: one row per font, the "emb" column "yes" when the font program is in the file.
    const rows = pdf.fonts.split('\n').filter((row) => row.includes('Roboto'));
    expect(rows.length).toBeGreaterThan(0);
    for (const row of rows) expect(row).toMatch(/\byes\b/);
  });

  it('opens with the case code, board, status and diagnosis, then the lesions and scores', () => {
    expect(pdf.pages[0]).toContain(`Board summary: ${detail.caseCode}`);
    expect(pdf.flat).toContain(detail.board.name);
    for (const lesion of detail.lesions) {
      expect(pdf.flat).toContain(`Segment ${lesion.segment} · ${lesion.diameterMm} mm`);
    }
    // The scores are the case file's (one function for both), of the newest panel.
    if (detail.scores.meld !== null) expect(pdf.flat).toContain(`MELD: ${detail.scores.meld}`);
    if (detail.scores.childPugh) {
      expect(pdf.flat).toContain(`Child-Pugh: Class ${detail.scores.childPugh.class}`);
    }
    const newest = detail.labPanels[0];
    expect(pdf.flat).toContain(newest.takenAt.slice(0, 16).replace('T', ' '));
  });

  it('gives each assessed plan its verdict, reasons and lead figures', () => {
    const done = plans.filter((plan) => assessed.get(plan.id)?.status === 'done');
    expect(done.length).toBe(plans.length);
    done.forEach((plan, index) => {
      const result = assessed.get(plan.id)?.result;
      if (!result) throw new Error('no result');
      // One page each, after the case page, in the comparison's order (oldest plan first).
      const page = flat(pdf.pages[1 + index]);
      expect(page).toContain(plan.name);
      expect(page).toContain(`Verdict: ${verdictLevelLabels[result.verdict.level]}`);
      for (const reason of result.verdict.reasons) expect(page).toContain(flat(reason.message));
      for (const label of ['Nearest clearance', 'Lowest coverage', 'Smallest margin']) {
        expect(page).toContain(`${label}:`);
      }
    });
  });

  it('has one page for the case and one per assessed plan, the caution on every page', () => {
    // Counted from the layout (README): page 1 the case, one page per plan whose newest
    // assessment is done; no vote or decision yet (its meeting is still scheduled), no key
    // images kept yet (the next block keeps some), no bookings (not built).
    expect(pdf.pageCount).toBe(1 + plans.length);
    expect(pdf.pages).toHaveLength(pdf.pageCount);
    for (const page of pdf.pages) expect(occurrences(flat(page), clinicalCaution)).toBe(1);
    expect(occurrences(pdf.flat, clinicalCaution)).toBe(pdf.pageCount);
    expect(pdf.flat).not.toContain('Signed decision');
    expect(pdf.flat).not.toContain('Key images');
    expect(pdf.flat).not.toContain('Booking');
  });

  it('holds no identifying value: no e-mail address, nothing of the source DICOM patient', async () => {
    const emails = (await testApp.orm.em.fork().find(User, {})).map((user) => user.email);
    for (const text of [pdf.flat, pdf.info]) {
      expect(text).not.toMatch(/[\w.+-]+@[\w-]+\.[\w.]+/);
      for (const email of emails) expect(text).not.toContain(email);
      // The invented CT's identifying attributes (sample-data/abdomen/write-dicom.ts), which
      // the imaging import replaces: none may come back in the summary.
      for (const value of [
        INVENTED_PATIENT.patientName,
        INVENTED_PATIENT.patientName.replace('^', ' '),
        INVENTED_PATIENT.patientId,
        INVENTED_PATIENT.patientBirthDate,
        INVENTED_PATIENT.institutionName,
        INVENTED_PATIENT.accessionNumber,
      ]) {
        expect(text).not.toContain(value);
      }
    }
  });

  it('is audited as case.summary-pdf by the member who downloaded it', async () => {
    const memberUser = await testApp.orm.em
      .fork()
      .findOneOrFail(User, { email: 'member@emberline.test' });
    const events = await testApp.orm.em.fork().find(AuditEvent, {
      action: 'case.summary-pdf',
      entityId: ids.northReady,
      actorId: memberUser.id,
    });
    expect(events).toHaveLength(1);
  });
});

describe('the board summary with key images (NLB-2026-014)', () => {
  let pdf: ReadPdf;
  let kept: KeyImageView[];
  const sizes: [number, number][] = [
    [64, 48],
    [40, 80],
    [96, 32],
  ];

  beforeAll(async () => {
    const [series] = (await member.get(`/api/cases/${ids.northReady}/series`))
      .body as ImageSeriesView[];
    kept = [];
    for (const [index, [width, height]] of sizes.entries()) {
      const png = rgbaPng(width, height, (x, y) => [(x * 4) % 256, (y * 3) % 256, 60 * index, 255]);
      const response = await member.agent
        .post(`/api/cases/${ids.northReady}/key-images`)
        .set('Host', '127.0.0.1')
        .set('X-XSRF-TOKEN', await csrfTokenOf(member))
        .attach('image', Buffer.from(png), { filename: 'view.png', contentType: 'image/png' })
        .field(
          'meta',
          JSON.stringify({
            seriesId: series.id,
            pane: index === 2 ? '3d' : 'axial',
            caption: `Key view number ${index + 1} of the tumour`,
            viewState: {
              cursorLps: [0, 0, 0],
              sliceIndex: index === 2 ? null : 10,
              window: { width: 400, level: 50 },
              camera: null,
              hiddenLabels: [],
              labelOpacity: 0.45,
              planId: null,
              zones: [],
            },
          }),
        );
      expect(response.status, JSON.stringify(response.body)).toBe(201);
      kept.push(response.body as KeyImageView);
    }
    pdf = await summaryOf(presenter, ids.northReady);
  });

  it('adds two key images a page after the plans, each with its caption, author and time', () => {
    // README layout: the case page, one page per assessed plan, then key images two a page.
    const keyPages = Math.ceil(kept.length / 2);
    expect(pdf.pageCount).toBe(1 + plans.length + keyPages);
    const first = flat(pdf.pages[1 + plans.length]);
    const second = flat(pdf.pages[2 + plans.length]);
    expect(first).toContain('Key images 1–2 of 3');
    expect(first).toContain('Key view number 1 of the tumour');
    expect(first).toContain('Key view number 2 of the tumour');
    expect(second).toContain('Key view number 3 of the tumour');
    expect(second).toContain('3D view');
    expect(first).toContain(
      `Kept by ${kept[0].author.displayName}, ${kept[0].createdAt.slice(0, 16).replace('T', ' ')} UTC`,
    );
    for (const page of pdf.pages) expect(occurrences(flat(page), clinicalCaution)).toBe(1);
  });

  it('embeds each picture at its own pixel size (pdfimages)', () => {
    const file = join(pdfDir, `${ids.northReady}.pdf`);
    const listing = execFileSync('pdfimages', ['-list', file], { encoding: 'utf8' });
    // Columns: page num type width height …; an RGBA PNG becomes an image and its soft mask.
    const rows = listing
      .split('\n')
      .slice(2)
      .map((row) => row.trim().split(/\s+/))
      .filter((cells) => cells.length > 4 && cells[2] === 'image');
    const embedded = rows.map((cells) => [Number(cells[0]), Number(cells[3]), Number(cells[4])]);
    expect(embedded).toEqual([
      [2 + plans.length, 64, 48],
      [2 + plans.length, 40, 80],
      [3 + plans.length, 96, 32],
    ]);
  });
});

async function csrfTokenOf(client: ApiClient): Promise<string> {
  const access = { domain: '127.0.0.1', path: '/', secure: false, script: true };
  if (!client.agent.jar.getCookie('XSRF-TOKEN', access)) await client.get('/api/health');
  const cookie = client.agent.jar.getCookie('XSRF-TOKEN', access);
  if (!cookie) throw new Error('the server set no XSRF-TOKEN cookie');
  return cookie.value;
}

describe('the board summary of the decided demo case (NLB-2026-022)', () => {
  let pdf: ReadPdf;
  let decision: DecisionView;

  beforeAll(async () => {
    pdf = await summaryOf(member, ids.northDecided);
    decision = (await member.get(`/api/cases/${ids.northDecided}/decision`)).body as DecisionView;
  });

  it('prints the signed decision and the tally of the meeting that decided it', () => {
    expect(pdf.flat).toContain('NLB-2026-022');
    expect(pdf.flat).toContain(`Outcome: ${treatmentLabels[decision.outcome]}`);
    expect(pdf.flat).toContain(flat(decision.rationale));
    expect(pdf.flat).toContain(`Signed by: ${decision.signer.displayName}`);
    expect(pdf.flat).toContain(decision.signedAt.slice(0, 16).replace('T', ' '));
    // demo-meetings.spec.ts: the three members present supported TACE.
    expect(pdf.flat).toContain(`${treatmentLabels.tace}: Support 3 · Oppose 0 · Abstain 0`);
  });

  it('has the case page and the board page, the caution on each', () => {
    // No plan of this case is assessed: page 1, then the votes and decision page.
    expect(pdf.pageCount).toBe(2);
    expect(pdf.pages[1]).toContain('Signed decision');
    for (const page of pdf.pages) expect(occurrences(flat(page), clinicalCaution)).toBe(1);
  });
});

describe('who may download it', () => {
  it('answers 404 for a case of another board, as the case file does', async () => {
    const response = await member.get(`/api/cases/${ids.southReady}/summary.pdf`);
    expect(response.status).toBe(404);
    expect(response.headers['content-type']).toContain('application/problem+json');
  });

  it('answers 401 when signed out', async () => {
    const response = await new ApiClient(testApp.app).get(
      `/api/cases/${ids.northReady}/summary.pdf`,
    );
    expect(response.status).toBe(401);
  });
});
