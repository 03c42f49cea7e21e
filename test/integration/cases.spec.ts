import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import {
  DEFAULT_REHEARSAL_SETTINGS,
  type CaseDetail,
  type CaseSummary,
  type Page,
  type ProblemDetails,
} from '@emberline/shared';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';

let testApp: TestApp;
let ids: DemoIds;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  const response = await client.signIn(email, demoPassword);
  expect(response.status).toBe(200);
  return client;
}

const newCase = (boardId: string, caseCode = 'NLB-2026-101') => ({
  caseCode,
  boardId,
  yearOfBirth: 1961,
  sex: 'female',
  primaryDiagnosis: 'hcc',
});

// Worked example computed from the formulas [C] (Kim WR et al., N Engl J Med 2008;359:1018;
// UNOS/OPTN MELD policy):
// Cr 2.7 mg/dL, bilirubin 1.5 mg/dL, INR 1.1, Na 135 → MELD 19, MELD-Na 20.
const labsConventional = {
  // Newer than the demo's own panel (three days old), so it is the one the scores use.
  takenAt: new Date(Date.now() - 3_600_000).toISOString(),
  bilirubin: { value: 1.5, unit: 'mg/dL' },
  albumin: { value: 3.0, unit: 'g/dL' },
  inr: 1.1,
  creatinine: { value: 2.7, unit: 'mg/dL' },
  sodiumMmolL: 135,
  plateletsE9L: 120,
  ascites: 'mild',
  encephalopathy: 'none',
  dialysisTwiceInPastWeek: false,
};

beforeAll(async () => {
  testApp = await startTestApp();
});
afterAll(async () => {
  await testApp.close();
});
beforeEach(async () => {
  ids = await resetToDemo(testApp.orm);
});

describe('case register', () => {
  it('lists only the cases of the boards the user belongs to', async () => {
    const member = await signedIn('member@emberline.test');
    const page = (await member.get('/api/cases')).body as Page<CaseSummary>;
    expect(page.total).toBe(3);
    expect(page.items.every((item) => item.boardName === 'North Liver Board')).toBe(true);
    const south = await signedIn('south@emberline.test');
    const southPage = (await south.get('/api/cases')).body as Page<CaseSummary>;
    expect(southPage.items.map((item) => item.caseCode)).toEqual(['SLB-2026-007']);
  });

  it('shows a nurse coordinator decided cases only', async () => {
    const coordinator = await signedIn('coordinator@emberline.test');
    const page = (await coordinator.get('/api/cases')).body as Page<CaseSummary>;
    expect(page.items.map((item) => item.status)).toEqual(['decided']);
  });

  it('pages on the server with total counts', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    for (let n = 0; n < 23; n += 1) {
      const created = await presenter.post(
        '/api/cases',
        newCase(ids.northBoard, `PAGE-${String(n).padStart(3, '0')}`),
      );
      expect(created.status).toBe(201);
    }
    const first = (await presenter.get('/api/cases?page=0&size=10&sort=caseCode:asc'))
      .body as Page<CaseSummary>;
    const third = (await presenter.get('/api/cases?page=2&size=10&sort=caseCode:asc'))
      .body as Page<CaseSummary>;
    expect(first.total).toBe(26);
    expect(first.items).toHaveLength(10);
    expect(third.items).toHaveLength(6);
    expect(first.items[0]?.caseCode).toBe('NLB-2026-014');
    expect(third.items.at(-1)?.caseCode).toBe('PAGE-022');
  });

  it('sorts by a column in either direction', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const ascending = (await presenter.get('/api/cases?sort=caseCode:asc'))
      .body as Page<CaseSummary>;
    const descending = (await presenter.get('/api/cases?sort=caseCode:desc'))
      .body as Page<CaseSummary>;
    expect(ascending.items.map((i) => i.caseCode)).toEqual([
      'NLB-2026-014',
      'NLB-2026-019',
      'NLB-2026-022',
    ]);
    expect(descending.items.map((i) => i.caseCode)).toEqual([
      'NLB-2026-022',
      'NLB-2026-019',
      'NLB-2026-014',
    ]);
  });

  it('filters by code and by diagnosis name', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const byCode = (await presenter.get('/api/cases?q=019')).body as Page<CaseSummary>;
    expect(byCode.items.map((i) => i.caseCode)).toEqual(['NLB-2026-019']);
    const byDiagnosis = (await presenter.get('/api/cases?q=colorectal')).body as Page<CaseSummary>;
    expect(byDiagnosis.items.map((i) => i.primaryDiagnosis)).toEqual(['crlm']);
  });

  it('refuses an unknown sort field with a 400 that names the field', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await presenter.get('/api/cases?sort=yearOfBirth:asc');
    expect(response.status).toBe(400);
    expect((response.body as ProblemDetails).errors?.[0]?.path).toBe('sort');
  });
});

describe('case file', () => {
  it('creates, reads, updates and deletes a draft case', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const created = await presenter.post('/api/cases', {
      ...newCase(ids.northBoard),
      caseCode: 'nlb-2026-101',
    });
    expect(created.status).toBe(201);
    const detail = created.body as CaseDetail;
    expect(detail.caseCode).toBe('NLB-2026-101');
    expect(detail.status).toBe('draft');
    expect(detail.presenter.displayName).toBe('Dr Priya Raman');
    expect(detail.permissions).toEqual({ canEdit: true, canDelete: true, canAddLabPanel: true });

    const updated = await presenter.patch(`/api/cases/${detail.id}`, {
      primaryDiagnosis: 'crlm',
      ecogPerformanceStatus: 1,
      status: 'ready-for-board',
    });
    expect(updated.status).toBe(200);
    expect((updated.body as CaseDetail).primaryDiagnosis).toBe('crlm');
    expect((updated.body as CaseDetail).ecogPerformanceStatus).toBe(1);

    const read = await presenter.get(`/api/cases/${detail.id}`);
    expect((read.body as CaseDetail).status).toBe('ready-for-board');

    expect((await presenter.delete(`/api/cases/${detail.id}`)).status).toBe(409);
    await presenter.patch(`/api/cases/${detail.id}`, { status: 'draft' });
    expect((await presenter.delete(`/api/cases/${detail.id}`)).status).toBe(204);
    expect((await presenter.get(`/api/cases/${detail.id}`)).status).toBe(404);
  });

  it('refuses a taken case code with 409', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await presenter.post('/api/cases', newCase(ids.northBoard, 'NLB-2026-014'));
    expect(response.status).toBe(409);
  });

  it.each([
    ['caseCode', { caseCode: 'x' }],
    ['yearOfBirth', { yearOfBirth: 1800 }],
    ['sex', { sex: 'x' }],
    ['primaryDiagnosis', { primaryDiagnosis: 'melanoma' }],
    ['boardId', { boardId: 'not-a-uuid' }],
  ])('refuses an invalid %s with a 400 whose body names the field', async (field, change) => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await presenter.post('/api/cases', { ...newCase(ids.northBoard), ...change });
    expect(response.status).toBe(400);
    const problem = response.body as ProblemDetails;
    expect(response.headers['content-type']).toContain('application/problem+json');
    expect(problem.errors?.map((error) => error.path)).toContain(field);
    expect(problem.detail).toContain(field);
  });

  it('keeps the case’s own insertion-rehearsal settings, refuses bad ones, goes back to the defaults', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const before = (await presenter.get(`/api/cases/${ids.northDraft}`)).body as CaseDetail;
    // The defaults: medium mesh, 12 mm / 4 s / n = 2 (Lujan's model, common practice for quiet
    // breathing), liver 6 kPa, ν 0.45.
    expect(before.rehearsal).toEqual(DEFAULT_REHEARSAL_SETTINGS);
    expect(before.hasOwnRehearsalSettings).toBe(false);
    const own = {
      resolution: 'fine',
      breathing: { amplitudeMm: 18, periodS: 5, shapeN: 3 },
      material: { youngsModulusPa: 9000, poissonRatio: 0.47 },
    };
    const saved = await presenter.patch(`/api/cases/${ids.northDraft}`, { rehearsal: own });
    expect(saved.status).toBe(200);
    expect((saved.body as CaseDetail).rehearsal).toEqual(own);
    expect((saved.body as CaseDetail).hasOwnRehearsalSettings).toBe(true);
    const refused = await presenter.patch(`/api/cases/${ids.northDraft}`, {
      rehearsal: { ...own, breathing: { ...own.breathing, amplitudeMm: 80 } },
    });
    expect(refused.status).toBe(400);
    expect((refused.body as ProblemDetails).errors?.[0]?.path).toBe(
      'rehearsal.breathing.amplitudeMm',
    );
    expect(
      ((await presenter.get(`/api/cases/${ids.northDraft}`)).body as CaseDetail).rehearsal,
    ).toEqual(own);
    const member = await signedIn('member@emberline.test');
    expect(
      (await member.patch(`/api/cases/${ids.northDraft}`, { rehearsal: null })).status,
    ).toBeGreaterThanOrEqual(403);
    const reset = await presenter.patch(`/api/cases/${ids.northDraft}`, { rehearsal: null });
    expect((reset.body as CaseDetail).rehearsal).toEqual(DEFAULT_REHEARSAL_SETTINGS);
    expect((reset.body as CaseDetail).hasOwnRehearsalSettings).toBe(false);
  });

  it('answers 404 for a case of a board the user does not belong to', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    expect((await presenter.get(`/api/cases/${ids.southReady}`)).status).toBe(404);
    expect((await presenter.get('/api/cases/not-a-uuid')).status).toBe(404);
  });

  it('adds and removes lesions by Couinaud segment, given as numeral or number', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const added = await presenter.post(`/api/cases/${ids.northDraft}/lesions`, {
      segment: 7,
      diameterMm: 21,
      kind: 'metastasis',
    });
    expect(added.status).toBe(201);
    const lesions = (added.body as CaseDetail).lesions;
    expect(lesions.map((l) => l.segment)).toEqual(['IV', 'VI', 'VII']);
    const invalid = await presenter.post(`/api/cases/${ids.northDraft}/lesions`, {
      segment: 'IX',
      diameterMm: 21,
      kind: 'metastasis',
    });
    expect(invalid.status).toBe(400);
    expect((invalid.body as ProblemDetails).errors?.[0]?.path).toBe('segment');
    const removed = await presenter.delete(
      `/api/cases/${ids.northDraft}/lesions/${lesions[2]?.id}`,
    );
    expect((removed.body as CaseDetail).lesions).toHaveLength(2);
  });
});

describe('lab panels and scores', () => {
  it('computes MELD and MELD-Na from the newest panel (Kim 2008 worked example 2.7/1.5/1.1/135 → 19/20)', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await presenter.post(
      `/api/cases/${ids.northDraft}/lab-panels`,
      labsConventional,
    );
    expect(response.status).toBe(201);
    const detail = response.body as CaseDetail;
    expect(detail.scores.meld).toBe(19);
    expect(detail.scores.meldNa).toBe(20);
    // Child-Pugh standard table: bilirubin <2 → 1, albumin 2.8–3.5 → 2, INR <1.7 → 1, mild ascites → 2,
    // no encephalopathy → 1: 7 points, class B.
    expect(detail.scores.childPugh).toEqual({ points: 7, class: 'B' });
    expect(detail.labPanels[0]?.takenAt).toBe(labsConventional.takenAt);
    expect(detail.labPanels).toHaveLength(2);
  });

  it('gives the same scores for SI units as for conventional ones (×17.1, ×88.4, ×10)', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const si = {
      ...labsConventional,
      bilirubin: { value: 25.65, unit: 'umol/L' }, // 1.5 mg/dL × 17.1
      albumin: { value: 30, unit: 'g/L' },
      creatinine: { value: 238.68, unit: 'umol/L' }, // 2.7 mg/dL × 88.4
    };
    const detail = (await presenter.post(`/api/cases/${ids.northDraft}/lab-panels`, si))
      .body as CaseDetail;
    expect(detail.scores.meld).toBe(19);
    expect(detail.scores.meldNa).toBe(20);
    expect(detail.scores.childPugh).toEqual({ points: 7, class: 'B' });
    // ALBI (Johnson PJ et al., J Clin Oncol 2015;33:550): 0.66·log10(25.65) − 0.085·30 = −1.620, grade 2 [C].
    expect(detail.scores.albi?.score).toBeCloseTo(0.66 * Math.log10(25.65) - 0.085 * 30, 3);
    expect(detail.scores.albi?.grade).toBe(2);
    // Entered values are kept as entered: nothing is lost in conversion.
    expect(detail.labPanels[0]?.bilirubin).toEqual({ value: 25.65, unit: 'umol/L' });
  });

  it('sets creatinine to 4.0 after dialysis twice in the past week (UNOS/OPTN MELD policy)', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const detail = (
      await presenter.post(`/api/cases/${ids.northDraft}/lab-panels`, {
        ...labsConventional,
        creatinine: { value: 1.0, unit: 'mg/dL' },
        dialysisTwiceInPastWeek: true,
      })
    ).body as CaseDetail;
    const expected = Math.round(
      10 * (0.957 * Math.log(4) + 0.378 * Math.log(1.5) + 1.12 * Math.log(1.1) + 0.643),
    );
    expect(detail.scores.meld).toBe(expected);
  });

  it('leaves lab scores null with the reason when no panel exists', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const created = (await presenter.post('/api/cases', newCase(ids.northBoard)))
      .body as CaseDetail;
    expect(created.scores.meld).toBeNull();
    expect(created.scores.childPugh).toBeNull();
    expect(created.scores.unavailable.meld).toMatch(/creatinine|bilirubin|INR/i);
  });

  it('refuses implausible values with a 400 naming the field', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await presenter.post(`/api/cases/${ids.northDraft}/lab-panels`, {
      ...labsConventional,
      bilirubin: { value: 120, unit: 'mg/dL' },
    });
    expect(response.status).toBe(400);
    expect((response.body as ProblemDetails).errors?.[0]?.path).toBe('bilirubin.value');
  });

  it('refuses a panel dated in the future', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    const response = await presenter.post(`/api/cases/${ids.northDraft}/lab-panels`, {
      ...labsConventional,
      takenAt: '2099-01-01',
    });
    expect(response.status).toBe(400);
    expect((response.body as ProblemDetails).errors?.[0]?.path).toBe('takenAt');
  });
});

describe('audit of case records', () => {
  it('writes who read which case, when and from where, and no patient value', async () => {
    const member = await signedIn('member@emberline.test');
    await member.get(`/api/cases/${ids.northReady}`);
    const events = await testApp.orm.em
      .fork()
      .find(AuditEvent, { action: 'case.read', entityId: ids.northReady });
    expect(events).toHaveLength(1);
    expect(events[0]?.actorEmail).toBe('member@emberline.test');
    expect(events[0]?.ip).toBeTruthy();
    expect(JSON.stringify(events[0]?.detail)).not.toContain('1958');
  });

  it('writes every change with the record it touched', async () => {
    const presenter = await signedIn('presenter@emberline.test');
    await presenter.patch(`/api/cases/${ids.northDraft}`, { ecogPerformanceStatus: 2 });
    await presenter.post(`/api/cases/${ids.northDraft}/lab-panels`, labsConventional);
    const actions = (
      await testApp.orm.em
        .fork()
        .find(AuditEvent, { entityId: ids.northDraft }, { orderBy: { at: 'asc' } })
    ).map((e) => e.action);
    expect(actions).toEqual(expect.arrayContaining(['case.update', 'lab-panel.create']));
  });
});
