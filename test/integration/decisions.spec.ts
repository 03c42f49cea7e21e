/**
 * The board's signed decision through the API: who may record it (a proceduralist of the
 * case's board), on what (a case on an open agenda item), with what quorum (the board's
 * required specialties, or the chair's stated reason), signed how (the password again, or a
 * single sign-on of the last five minutes), with what effects (case decided, plan selected,
 * the others set aside, item closed, the room told), amendments appended, and the decided
 * case's record read-only. Rules of the product: DEVELOPERS.md ("Roles", "Principles") and
 * server/src/modules/decisions/README.md.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  specialtyLabels,
  type CaseDetail,
  type DecisionView,
  type PlanView,
  type ProblemDetails,
} from '@emberline/shared';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { AgendaItem } from '../../server/src/modules/meetings/agenda-item.entity';
import { RecordingBoardRoom } from './board-room-recorder';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { boardMembers, meetingWithAgenda, planStatuses, plansInStates } from './decision-fixtures';
import { planBody } from './plan-fixtures';

const room = new RecordingBoardRoom();
let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;
let member: ApiClient;
let proceduralist: ApiClient;
let coordinator: ApiClient;
let south: ApiClient;
let admin: ApiClient;
let idOf: (email: string) => string;
let meetingId: string;
let itemId: string;
let seriesId: string;
let plans: Record<'chosen' | 'other' | 'failed' | 'draft', PlanView>;

const readOnly =
  'The case is decided; its record is read-only. Record a correction as an amendment to the decision.';

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

const problem = (body: unknown) => body as ProblemDetails;

const decisionBody = (overrides: Record<string, unknown> = {}) => ({
  outcome: 'ablation-mw',
  planId: plans.chosen.id,
  rationale: 'Single 24 mm lesion in segment VII, away from the hepatic veins; fit for ablation.',
  conditions: 'Repeat contrast CT at four weeks.',
  password: demoPassword,
  ...overrides,
});

const decide = (client: ApiClient, overrides: Record<string, unknown> = {}) =>
  client.post(`/api/cases/${ids.northReady}/decision`, decisionBody(overrides));

/**
 * Rewrites the proceduralist's stored sessions as a single sign-on session that signed in at
 * `signedInAt` (or back to a local one): what the SAML callback writes, without the identity
 * provider round trip the SAML tests already cover.
 */
async function setSessions(method: 'local' | 'saml', signedInAt: number): Promise<void> {
  await testApp.orm.em
    .getConnection()
    .execute(
      `update http_session set sess = (sess::jsonb || ?::jsonb)::json where sess ->> 'userId' = ?`,
      [JSON.stringify({ signInMethod: method, signedInAt }), idOf('proceduralist@emberline.test')],
    );
}

beforeAll(async () => {
  testApp = await startTestApp({}, { boardRoom: room });
  ids = await resetToDemo(testApp.orm);
  [presenter, member, proceduralist, coordinator, south, admin] = await Promise.all(
    [
      'presenter@emberline.test',
      'member@emberline.test',
      'proceduralist@emberline.test',
      'coordinator@emberline.test',
      'south@emberline.test',
      'admin@emberline.test',
    ].map(signedIn),
  );
  const memberOf = await boardMembers(member, ids.northBoard);
  idOf = (email) => memberOf(email).userId;
  // Quorum of this board: a diagnostic and an interventional radiologist.
  const quorum = await admin.put(`/api/admin/boards/${ids.northBoard}/quorum`, {
    requiredSpecialties: ['diagnostic-radiology', 'interventional-radiology'],
  });
  expect(quorum.status).toBe(200);
  const created = await plansInStates(
    testApp.orm,
    presenter,
    idOf('presenter@emberline.test'),
    ids.northReady,
    [
      { name: 'Plan A', status: 'assessed' },
      { name: 'Plan B', status: 'assessed' },
      { name: 'Plan C', status: 'assessment-failed' },
      { name: 'Plan D', status: 'draft' },
    ],
  );
  seriesId = created.seriesId;
  const [chosen, other, failed, draft] = created.plans;
  plans = { chosen, other, failed, draft };
  // Chaired by the board member: the proceduralist is not the chair here.
  const meeting = await meetingWithAgenda(
    presenter,
    ids.northBoard,
    idOf('member@emberline.test'),
    [ids.northReady],
  );
  meetingId = meeting.id;
  itemId = meeting.agenda[0].id;
}, 60_000);

afterAll(async () => {
  await testApp?.close();
});

describe('before the decision', () => {
  it('refuses a board member, the presenter and a coordinator of the board (403), and another board (404)', async () => {
    for (const client of [member, presenter, coordinator]) {
      const response = await decide(client);
      expect(response.status, JSON.stringify(response.body)).toBe(403);
      expect(problem(response.body).detail).toBe(
        'Only a proceduralist of the case’s board records the board’s decision.',
      );
    }
    expect((await decide(south)).status).toBe(404);
  });

  it('answers 404 while there is no decision, to anyone who sees the case', async () => {
    expect((await member.get(`/api/cases/${ids.northReady}/decision`)).status).toBe(404);
    // The demo's decided case predates recorded decisions: it has none either.
    expect((await coordinator.get(`/api/cases/${ids.northDecided}/decision`)).status).toBe(404);
  });

  it('refuses a decision without quorum (409), naming what is missing', async () => {
    const response = await decide(proceduralist);
    expect(response.status).toBe(409);
    // Nobody attends yet: no socket in the room, no vote cast.
    expect(problem(response.body).detail).toBe(
      'Quorum not met: nobody is attending. ' +
        'The meeting’s chair may record the decision without quorum, giving the reason.',
    );
  });

  it('refuses a quorum override from anyone but the chair (403)', async () => {
    const response = await decide(proceduralist, { quorumOverrideReason: 'Radiologist on leave' });
    expect(response.status).toBe(403);
    expect(problem(response.body).detail).toBe('Only the chair may override quorum.');
  });

  it('counts members who attend by voting over the API towards quorum', async () => {
    const byMember = await member.post(`/api/agenda-items/${itemId}/votes`, {
      option: plans.chosen.id,
      position: 'support',
    });
    expect(byMember.status, JSON.stringify(byMember.body)).toBe(200);
    const stillShort = await decide(proceduralist);
    expect(stillShort.status).toBe(409);
    expect(problem(stillShort.body).detail).toContain(
      `missing ${specialtyLabels['interventional-radiology']}.`,
    );
    const byProceduralist = await proceduralist.post(`/api/agenda-items/${itemId}/votes`, {
      option: plans.chosen.id,
      position: 'support',
    });
    expect(byProceduralist.status, JSON.stringify(byProceduralist.body)).toBe(200);
  });

  // Re-authentication before a sensitive transaction: OWASP ASVS 4.0.3 V3.7.1 (from memory).
  it('refuses a wrong or missing password (401) and audits the refusal like a refused sign-in', async () => {
    const wrong = await decide(proceduralist, { password: 'not the password' });
    expect(wrong.status).toBe(401);
    expect(problem(wrong.body)).toMatchObject({
      type: 'urn:emberline:problem:password-required',
      detail: 'The password is not correct; nothing was signed.',
    });
    const missing = await decide(proceduralist, { password: undefined });
    expect(missing.status).toBe(401);
    expect(problem(missing.body).detail).toBe('Enter your password to sign.');
    const refusals = await testApp.orm.em.fork().find(AuditEvent, {
      action: 'decision.sign-refused',
      actorId: idOf('proceduralist@emberline.test'),
    });
    expect(refusals.map((event) => [event.outcome, event.detail.reason]).sort()).toEqual([
      ['refused', 'credentials'],
      ['refused', 'missing-password'],
    ]);
  });

  it('sends a single sign-on account older than five minutes through sign-on again (401)', async () => {
    await setSessions('saml', Date.now() - 6 * 60_000);
    try {
      const stale = await decide(proceduralist, { password: undefined });
      expect(stale.status).toBe(401);
      expect(problem(stale.body).type).toBe('urn:emberline:problem:fresh-sso-required');
    } finally {
      await setSessions('local', Date.now());
    }
  });

  it('selects only an assessed plan of the case, and only for an ablation (400 naming planId)', async () => {
    for (const planId of [plans.failed.id, plans.draft.id]) {
      const response = await decide(proceduralist, { planId });
      expect(response.status).toBe(400);
      expect(problem(response.body).errors?.map((error) => error.path)).toEqual(['planId']);
    }
    const forSurgery = await decide(proceduralist, { outcome: 'resection' });
    expect(forSurgery.status).toBe(400);
    expect(problem(forSurgery.body).errors?.map((error) => error.path)).toEqual(['planId']);
  });

  it('takes an urgency of routine, priority or urgent only (400 naming urgency)', async () => {
    const response = await decide(proceduralist, { urgency: 'tomorrow' });
    expect(response.status).toBe(400);
    expect(problem(response.body).errors?.map((error) => error.path)).toEqual(['urgency']);
  });
});

describe('the decision', () => {
  let decision: DecisionView;

  it('is signed by a proceduralist of the board with quorum, and answers the decision', async () => {
    const response = await decide(proceduralist, { urgency: 'priority' });
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    decision = response.body as DecisionView;
    expect(decision).toMatchObject({
      caseId: ids.northReady,
      meetingId,
      agendaItemId: itemId,
      outcome: 'ablation-mw',
      selectedPlan: { id: plans.chosen.id, name: 'Plan A' },
      rationale: decisionBody().rationale,
      conditions: decisionBody().conditions,
      signer: { id: idOf('proceduralist@emberline.test') },
      signInMethod: 'local',
      quorumOverrideReason: null,
      urgency: 'priority',
      amendments: [],
    });
    expect(decision.quorum).toMatchObject({ isMet: true, missing: [], presentCount: 2 });
  });

  it('decides the case, selects the plan, sets every other plan aside and closes the item', async () => {
    const detail = (await presenter.get(`/api/cases/${ids.northReady}`)).body as CaseDetail;
    expect(detail.status).toBe('decided');
    expect(detail.permissions.canEdit).toBe(false);
    expect(detail.nextMeeting).toBeNull();
    const statuses = await planStatuses(testApp.orm, ids.northReady);
    expect(statuses.get(plans.chosen.id)).toBe('selected');
    expect(statuses.get(plans.other.id)).toBe('set-aside');
    expect(statuses.get(plans.failed.id)).toBe('set-aside');
    expect(statuses.get(plans.draft.id)).toBe('set-aside');
    const item = await testApp.orm.em.fork().findOneOrFail(AgendaItem, itemId);
    expect(item.closedAt?.toISOString()).toBe(decision.signedAt);
    const signed = await testApp.orm.em.fork().find(AuditEvent, { action: 'decision.sign' });
    expect(signed.map((event) => event.entityId)).toEqual([ids.northReady]);
  });

  it('tells the meeting’s room: the decision, then the changed agenda', () => {
    const toMeeting = room.emitted.filter((entry) => entry.meetingId === meetingId);
    const told = toMeeting.slice(
      toMeeting.findIndex((entry) => entry.event === 'decision:recorded'),
    );
    // Nothing else reached the room after the decision was signed.
    expect(told.map((entry) => entry.event)).toEqual(['decision:recorded', 'agenda:changed']);
    expect(told[0].payload).toEqual({ meetingId, agendaItemId: itemId, decision });
    expect(told[1].payload).toEqual({ meetingId, reason: 'decision' });
  });

  it('is recorded once: a second decision is refused (409)', async () => {
    const again = await decide(proceduralist, { outcome: 'surveillance', planId: undefined });
    expect(again.status).toBe(409);
    expect(problem(again.body).detail).toContain('decided already');
  });

  it('is read by anyone who sees the case, a coordinator included, and by nobody else', async () => {
    const readers = [
      ['member@emberline.test', member],
      ['coordinator@emberline.test', coordinator],
      ['presenter@emberline.test', presenter],
      ['proceduralist@emberline.test', proceduralist],
    ] as const;
    for (const [, client] of readers) {
      const response = await client.get(`/api/cases/${ids.northReady}/decision`);
      expect(response.status).toBe(200);
      expect(response.body).toEqual(decision);
    }
    expect((await south.get(`/api/cases/${ids.northReady}/decision`)).status).toBe(404);
    expect((await admin.get(`/api/cases/${ids.northReady}/decision`)).status).toBe(404);
    // Every read of a case's record is audited (DEVELOPERS.md, "Privacy").
    const reads = await testApp.orm.em.fork().find(AuditEvent, { action: 'decision.read' });
    expect(reads.map((event) => event.actorId).sort()).toEqual(
      readers.map(([email]) => idOf(email)).sort(),
    );
  });
});

describe('amendments', () => {
  const amendment = {
    reason: 'Conditions omitted the anticoagulation pause',
    text: 'Pause apixaban 48 hours before the procedure, as local protocol asks.',
  };

  it('are signed by a proceduralist of the board only (403 for others, 401 without the password)', async () => {
    const byMember = await member.post(`/api/cases/${ids.northReady}/decision/amendments`, {
      ...amendment,
      password: demoPassword,
    });
    expect(byMember.status).toBe(403);
    const unsigned = await proceduralist.post(`/api/cases/${ids.northReady}/decision/amendments`, {
      ...amendment,
      password: 'not the password',
    });
    expect(unsigned.status).toBe(401);
    expect(problem(unsigned.body).type).toBe('urn:emberline:problem:password-required');
  });

  it('are appended in order, leaving the decision as signed', async () => {
    const first = await proceduralist.post(`/api/cases/${ids.northReady}/decision/amendments`, {
      ...amendment,
      password: demoPassword,
    });
    expect(first.status, JSON.stringify(first.body)).toBe(201);
    // A fresh single sign-on signs without a password.
    await setSessions('saml', Date.now());
    let second;
    try {
      second = await proceduralist.post(`/api/cases/${ids.northReady}/decision/amendments`, {
        reason: 'Follow-up imaging',
        text: 'MRI instead of CT at four weeks (contrast allergy noted).',
      });
    } finally {
      await setSessions('local', Date.now());
    }
    expect(second.status, JSON.stringify(second.body)).toBe(201);
    const view = second.body as DecisionView;
    expect(view.amendments.map((entry) => [entry.reason, entry.signer.id])).toEqual([
      [amendment.reason, idOf('proceduralist@emberline.test')],
      ['Follow-up imaging', idOf('proceduralist@emberline.test')],
    ]);
    expect(view.amendments[0].text).toBe(amendment.text);
    const read = (await member.get(`/api/cases/${ids.northReady}/decision`)).body as DecisionView;
    expect(read.rationale).toBe(decisionBody().rationale);
    expect(read.outcome).toBe('ablation-mw');
    expect(read.amendments).toHaveLength(2);
    const audited = await testApp.orm.em.fork().count(AuditEvent, { action: 'decision.amend' });
    expect(audited).toBe(2);
  });
});

describe('the decided case’s record', () => {
  const labs = {
    takenAt: '2026-11-25',
    bilirubin: { value: 1.2, unit: 'mg/dL' },
    albumin: { value: 3.6, unit: 'g/dL' },
    inr: 1.1,
    creatinine: { value: 0.9, unit: 'mg/dL' },
    sodiumMmolL: 138,
    plateletsE9L: 160,
    ascites: 'none',
    encephalopathy: 'none',
    dialysisTwiceInPastWeek: false,
  };

  it('refuses every change with 409 and says how to correct it', async () => {
    const detail = (await presenter.get(`/api/cases/${ids.northReady}`)).body as CaseDetail;
    const caseUrl = `/api/cases/${ids.northReady}`;
    const profileId = plans.chosen.applicators[0].profileId;
    const changes: [string, () => ReturnType<ApiClient['post']>][] = [
      ['PATCH case', () => presenter.patch(caseUrl, { ecogPerformanceStatus: 1 })],
      [
        'POST lesion',
        () => presenter.post(`${caseUrl}/lesions`, { segment: 'VI', diameterMm: 12, kind: 'hcc' }),
      ],
      ['DELETE lesion', () => presenter.delete(`${caseUrl}/lesions/${detail.lesions[0].id}`)],
      [
        'withdraw a lab panel',
        () =>
          presenter.post(`${caseUrl}/lab-panels/${detail.labPanels[0].id}/withdrawal`, {
            reason: 'Entered twice.',
          }),
      ],
      ['POST series', () => presenter.post(`${caseUrl}/series`, {})],
      ['POST structures', () => presenter.post(`/api/series/${seriesId}/structures`, {})],
      [
        'POST plan',
        () => presenter.post(`${caseUrl}/plans`, planBody(seriesId, profileId, { name: 'Plan E' })),
      ],
      ['PATCH plan', () => presenter.patch(`/api/plans/${plans.draft.id}`, { name: 'Plan D2' })],
      ['POST plan copy', () => presenter.post(`/api/plans/${plans.chosen.id}/copy`)],
      ['DELETE plan', () => presenter.delete(`/api/plans/${plans.draft.id}`)],
      ['POST assessment', () => presenter.post(`/api/plans/${plans.other.id}/assessments`, {})],
    ];
    for (const [name, call] of changes) {
      const response = await call();
      expect(response.status, `${name}: ${JSON.stringify(response.body)}`).toBe(409);
      expect(problem(response.body).detail, name).toBe(readOnly);
    }
    const unchanged = (await presenter.get(`/api/cases/${ids.northReady}`)).body as CaseDetail;
    expect(unchanged.lesions).toEqual(detail.lesions);
    expect(unchanged.labPanels).toEqual(detail.labPanels);
    expect(unchanged.ecogPerformanceStatus).toBe(detail.ecogPerformanceStatus);
  });

  it('takes pre-procedure labs as a new panel beside the ones the board saw', async () => {
    const before = (await presenter.get(`/api/cases/${ids.northReady}`)).body as CaseDetail;
    const added = await presenter.post(`/api/cases/${ids.northReady}/lab-panels`, labs);
    expect(added.status, JSON.stringify(added.body)).toBe(201);
    const after = added.body as CaseDetail;
    expect(after.labPanels).toHaveLength(before.labPanels.length + 1);
    // The earlier panels are exactly as they were.
    for (const panel of before.labPanels)
      expect(after.labPanels.find((entry) => entry.id === panel.id)).toEqual(panel);
  });

  it('still answers 403 to someone who could never change it', async () => {
    expect(
      (await member.patch(`/api/cases/${ids.northReady}`, { ecogPerformanceStatus: 1 })).status,
    ).toBe(403);
  });
});
