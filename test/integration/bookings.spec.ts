/**
 * The nurse coordinator's logistics through the API: the queue, procedure bookings with their
 * clashes, rebooking and cancellation, the pre-procedure checklist against the SIR thresholds and
 * its overrides, the administrators' thresholds, the treatment by the operator, the follow-up
 * imaging and the due check. Rules: server/src/modules/bookings/README.md and DEVELOPERS.md
 * ("Roles": off the board 404, a forbidden act on a visible case 403).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  type BookingQueueItem,
  type BookingView,
  type CaseDetail,
  type CaseLogisticsView,
  type ProblemDetails,
  type ThresholdView,
  type TreatmentView,
} from '@emberline/shared';
import { demoMicrowaveProfileName } from '../../server/seeders/demo-plans';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { markDueFollowUps } from '../../server/src/modules/bookings/follow-up-due';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { LabPanel } from '../../server/src/modules/cases/lab-panel.entity';
import { MailDelivery } from '../../server/src/modules/mail/mail-delivery.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { resetToDemo, type DemoIds } from '../support/demo';
import {
  addUser,
  dayMs,
  decidedCase,
  decideExisting,
  hoursFromNow,
  signedIn,
} from './booking-fixtures';
import { boardMembers, plansInStates } from './decision-fixtures';

let testApp: TestApp;
let ids: DemoIds;
let coordinator: ApiClient;
let presenter: ApiClient;
let member: ApiClient;
let proceduralist: ApiClient;
let secondOperator: ApiClient;
let south: ApiClient;
let southCoordinator: ApiClient;
let admin: ApiClient;
let idOf: (email: string) => string;
let secondOperatorId: string;
let southCoordinatorId: string;

const problem = (body: unknown) => body as ProblemDetails;
const fieldsOf = (body: unknown) => problem(body).errors?.map((error) => error.path);

/** The procedure's start, a week ahead at 09:00 UTC; the panels and series are from yesterday. */
const start = hoursFromNow(7, 9);
const at = (minutes: number) => new Date(start.getTime() + minutes * 60_000).toISOString();

function bookingBody(overrides: Record<string, unknown> = {}) {
  return {
    startsAt: start.toISOString(),
    durationMin: 90,
    room: 'Interventional suite 1',
    operatorId: idOf('proceduralist@emberline.test'),
    anaesthesia: 'general',
    notes: 'Ultrasound and CT guidance.',
    ...overrides,
  };
}

const book = (client: ApiClient, caseId: string, overrides: Record<string, unknown> = {}) =>
  client.post(`/api/cases/${caseId}/booking`, bookingBody(overrides));

async function logistics(client: ApiClient, caseId: string): Promise<CaseLogisticsView> {
  const response = await client.get(`/api/cases/${caseId}/logistics`);
  expect(response.status, JSON.stringify(response.body)).toBe(200);
  return response.body as CaseLogisticsView;
}

async function queue(client: ApiClient, query = ''): Promise<BookingQueueItem[]> {
  const response = await client.get(`/api/bookings/queue${query}`);
  expect(response.status, JSON.stringify(response.body)).toBe(200);
  return response.body as BookingQueueItem[];
}

async function caseStatus(caseId: string): Promise<string> {
  return (await testApp.orm.em.fork().findOneOrFail(ClinicalCase, caseId)).status;
}

/** The newest panel of the case gets these values (the checklist reads the newest). */
async function setLabs(
  caseId: string,
  values: Partial<Pick<LabPanel, 'inr' | 'plateletsE9L' | 'takenAt'>>,
) {
  await testApp.orm.em.fork().nativeUpdate(LabPanel, { clinicalCase: caseId }, values);
}

function item(view: BookingView, key: string) {
  const found = view.checklist?.items.find((entry) => entry.key === key);
  if (!found) throw new Error(`no checklist item ${key}`);
  return found;
}

let ablationCase: string;
let roomCase: string;
let operatorCase: string;
let adjacentCase: string;
let urgentCase: string;
let surgeryCase: string;
let southCase: string;
let raceCases: [string, string];
let mailOffCase: string;

beforeAll(async () => {
  testApp = await startTestApp({}, { mailCatcher: true, mail: {} });
  ids = await resetToDemo(testApp.orm);
  secondOperatorId = await addUser(testApp.orm, {
    email: 'second.operator@emberline.test',
    displayName: 'Dr Aino Virtanen',
    roles: ['proceduralist'],
    boardId: ids.northBoard,
    specialty: 'interventional-radiology',
  });
  southCoordinatorId = await addUser(testApp.orm, {
    email: 'south.coordinator@emberline.test',
    displayName: 'Ravi Iyer',
    roles: ['nurse-coordinator'],
    boardId: ids.southBoard,
    specialty: 'nursing',
  });
  [coordinator, presenter, member, proceduralist, secondOperator, south, southCoordinator, admin] =
    await Promise.all(
      [
        'coordinator@emberline.test',
        'presenter@emberline.test',
        'member@emberline.test',
        'proceduralist@emberline.test',
        'second.operator@emberline.test',
        'south@emberline.test',
        'south.coordinator@emberline.test',
        'admin@emberline.test',
      ].map((email) => signedIn(testApp, email)),
    );
  const memberOf = await boardMembers(member, ids.northBoard);
  idOf = (email) => memberOf(email).userId;

  // The ablation: northReady with a plan of the demo microwave profile, selected by the decision.
  const { plans } = await plansInStates(
    testApp.orm,
    presenter,
    idOf('presenter@emberline.test'),
    ids.northReady,
    [{ name: 'Plan A', status: 'assessed' }],
  );
  ablationCase = await decideExisting(
    testApp.orm,
    ids.northReady,
    idOf('proceduralist@emberline.test'),
    idOf('presenter@emberline.test'),
    {
      outcome: 'ablation-mw',
      selectedPlanId: plans[0].id,
      conditions: 'CT at four weeks.',
      hasSeries: false,
    },
  );
  const north = (caseCode: string, extra: Record<string, unknown> = {}) =>
    decidedCase(testApp.orm, { caseCode, boardId: ids.northBoard, outcome: 'tace', ...extra });
  roomCase = await north('NLB-2027-101');
  operatorCase = await north('NLB-2027-102');
  adjacentCase = await north('NLB-2027-103');
  urgentCase = await north('NLB-2027-104', { urgency: 'urgent' });
  surgeryCase = await north('NLB-2027-105', { outcome: 'resection' });
  raceCases = [await north('NLB-2027-106'), await north('NLB-2027-107')];
  mailOffCase = await north('NLB-2027-108');
  southCase = await decidedCase(testApp.orm, {
    caseCode: 'SLB-2027-201',
    boardId: ids.southBoard,
    outcome: 'tare',
  });
}, 60_000);

afterAll(async () => {
  await testApp?.close();
});

describe('the queue', () => {
  it('lists the decided cases to book for a coordinator of the board, most urgent first', async () => {
    const items = await queue(coordinator);
    const codes = items.map((entry) => entry.caseCode);
    expect(codes[0]).toBe('NLB-2027-104');
    expect(codes).toEqual(
      expect.arrayContaining(['NLB-2026-014', 'NLB-2027-101', 'NLB-2027-102', 'NLB-2027-103']),
    );
    // Surgery is not booked here; the South case is another board's.
    expect(codes).not.toContain('NLB-2027-105');
    expect(codes).not.toContain('SLB-2027-201');
    const ablation = items.find((entry) => entry.caseId === ablationCase);
    expect(ablation).toMatchObject({
      kind: 'procedure',
      outcome: 'ablation-mw',
      urgency: 'routine',
      conditions: 'CT at four weeks.',
      selectedPlan: { name: 'Plan A' },
      booking: null,
      board: { id: ids.northBoard },
    });
    expect((await queue(coordinator, '?urgency=urgent')).map((entry) => entry.caseCode)).toEqual([
      'NLB-2027-104',
    ]);
  });

  it('shows another board’s coordinator only that board’s cases', async () => {
    expect((await queue(southCoordinator)).map((entry) => entry.caseCode)).toEqual([
      'SLB-2027-201',
    ]);
  });

  it('is for nurse coordinators only (403), and refuses an unknown filter (400)', async () => {
    for (const client of [presenter, member, proceduralist, admin, south]) {
      expect((await client.get('/api/bookings/queue')).status).toBe(403);
    }
    const wrong = await coordinator.get('/api/bookings/queue?kind=surgery');
    expect(wrong.status).toBe(400);
    expect(fieldsOf(wrong.body)).toEqual(['kind']);
  });
});

describe('booking the procedure', () => {
  let booking: BookingView;

  it('refuses the presenter, a member and the proceduralist (403), the administrator and another board (404)', async () => {
    for (const client of [presenter, member, proceduralist]) {
      const response = await book(client, ablationCase);
      expect(response.status).toBe(403);
      expect(problem(response.body).detail).toBe(
        'Only a nurse coordinator of the case’s board books the procedure.',
      );
    }
    for (const client of [admin, south, southCoordinator]) {
      expect((await book(client, ablationCase)).status).toBe(404);
    }
  });

  it('refuses bad input with 400 naming the field', async () => {
    const cases: [Record<string, unknown>, string][] = [
      [{ startsAt: 'next Tuesday' }, 'startsAt'],
      [{ durationMin: 10 }, 'durationMin'],
      [{ room: '  ' }, 'room'],
      [{ anaesthesia: 'local' }, 'anaesthesia'],
      [{ operatorId: idOf('member@emberline.test') }, 'operatorId'],
      [{ operatorId: southCoordinatorId }, 'operatorId'],
    ];
    for (const [overrides, field] of cases) {
      const response = await book(coordinator, ablationCase, overrides);
      expect(response.status, JSON.stringify(overrides)).toBe(400);
      expect(fieldsOf(response.body)).toEqual([field]);
    }
  });

  it('refuses a decision that is not booked here, and a case not decided (409)', async () => {
    const surgery = await book(coordinator, surgeryCase);
    expect(surgery.status).toBe(409);
    expect(problem(surgery.body).detail).toContain('not a procedure booked here');
    // A case still before the board is out of a coordinator's sight: 404.
    expect((await book(coordinator, ids.northDraft)).status).toBe(404);
  });

  it('books for a coordinator of the board: 201, the case booked, the plan’s applicators recorded', async () => {
    const response = await book(coordinator, ablationCase);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    booking = response.body as BookingView;
    expect(booking).toMatchObject({
      caseId: ablationCase,
      kind: 'procedure',
      state: 'booked',
      startsAt: start.toISOString(),
      durationMin: 90,
      room: 'Interventional suite 1',
      operator: { id: idOf('proceduralist@emberline.test'), displayName: 'Dr Mei Tanaka' },
      anaesthesia: 'general',
      sequence: 0,
      bookedBy: { id: idOf('coordinator@emberline.test') },
      applicators: [{ name: demoMicrowaveProfileName, version: 1 }],
      isMailEnabled: true,
      permissions: { canEdit: true, canCheck: true, canConfirm: true, canMarkDone: false },
    });
    expect(booking.history.map((entry) => entry.action)).toEqual(['booked']);
    expect(await caseStatus(ablationCase)).toBe('booked');
    const again = await book(coordinator, ablationCase, { startsAt: at(24 * 60) });
    expect(again.status).toBe(409);
  });

  it('is read by whoever sees the case, with their permissions; not by the administrator or another board', async () => {
    const byCoordinator = await logistics(coordinator, ablationCase);
    expect(byCoordinator).toMatchObject({
      caseStatus: 'booked',
      outcome: 'ablation-mw',
      urgency: 'routine',
      isBookable: false,
      procedure: { id: booking.id },
      past: [],
      treatment: null,
      followUp: null,
      permissions: { canBook: false, canRecordTreatment: false },
    });
    expect(byCoordinator.operators.map((operator) => operator.displayName)).toEqual([
      'Dr Aino Virtanen',
      'Dr Mei Tanaka',
    ]);
    const byPresenter = await logistics(presenter, ablationCase);
    expect(byPresenter.operators).toEqual([]);
    expect(byPresenter.procedure?.permissions).toEqual({
      canEdit: false,
      canCheck: false,
      canConfirm: false,
      canMarkDone: false,
    });
    expect((await logistics(proceduralist, ablationCase)).procedure?.permissions.canCheck).toBe(
      true,
    );
    for (const client of [admin, south, southCoordinator]) {
      expect((await client.get(`/api/cases/${ablationCase}/logistics`)).status).toBe(404);
    }
    const reads = await testApp.orm.em
      .fork()
      .count(AuditEvent, { action: 'logistics.read', entityId: ablationCase });
    // The coordinator, the presenter and the proceduralist; a 404 reads nothing.
    expect(reads).toBe(3);
  });

  it('leaves the queue, and shows again with includeBooked', async () => {
    expect((await queue(coordinator)).map((entry) => entry.caseId)).not.toContain(ablationCase);
    const withBooked = await queue(coordinator, '?includeBooked=true');
    expect(withBooked.find((entry) => entry.caseId === ablationCase)?.booking).toMatchObject({
      id: booking.id,
      state: 'booked',
    });
  });
});

describe('clashes', () => {
  // Half-open intervals [start, start + duration): one that ends as the other starts does not
  // overlap (common practice for calendars; RFC 5545 §3.6.1: DTEND is not part of the event).
  it('refuses the same room at an overlapping time (409), naming the room, the span and the case', async () => {
    const response = await book(coordinator, roomCase, {
      startsAt: at(60),
      room: '  interventional   SUITE 1 ',
      operatorId: secondOperatorId,
    });
    expect(response.status).toBe(409);
    expect(problem(response.body).detail).toMatch(
      /^Room clash: Interventional suite 1 is booked .*09:00–10:30 \(UTC\) for case NLB-2026-014\.$/,
    );
  });

  it('refuses the same operator in another room at an overlapping time (409)', async () => {
    const response = await book(coordinator, operatorCase, {
      startsAt: at(89),
      room: 'Interventional suite 2',
    });
    expect(response.status).toBe(409);
    expect(problem(response.body).detail).toMatch(
      /^Operator clash: Dr Mei Tanaka is booked .*09:00–10:30 \(UTC\) for case NLB-2026-014\.$/,
    );
  });

  it('allows a booking that starts as the other ends, and one that ends as it starts', async () => {
    const after = await book(coordinator, adjacentCase, { startsAt: at(90) });
    expect(after.status, JSON.stringify(after.body)).toBe(201);
    const before = await book(coordinator, operatorCase, { startsAt: at(-60), durationMin: 60 });
    expect(before.status, JSON.stringify(before.body)).toBe(201);
  });

  it('names a case the user may not see only as “another booking”', async () => {
    const southBooking = await book(southCoordinator, southCase, {
      startsAt: at(24 * 60),
      room: 'Shared angiography room',
      operatorId: idOf('proceduralist@emberline.test'),
    });
    // The South board has no proceduralist: its coordinator cannot name a North one.
    expect(southBooking.status).toBe(400);
    const southOperator = await addUser(testApp.orm, {
      email: 'south.operator@emberline.test',
      displayName: 'Dr Kofi Boateng',
      roles: ['proceduralist'],
      boardId: ids.southBoard,
      specialty: 'interventional-radiology',
    });
    const booked = await book(southCoordinator, southCase, {
      startsAt: at(24 * 60),
      room: 'Shared angiography room',
      operatorId: southOperator,
    });
    expect(booked.status, JSON.stringify(booked.body)).toBe(201);
    const clash = await book(coordinator, roomCase, {
      startsAt: at(24 * 60 + 30),
      room: 'Shared angiography room',
      operatorId: secondOperatorId,
    });
    expect(clash.status).toBe(409);
    expect(problem(clash.body).detail).toMatch(/for another booking\.$/);
    expect(problem(clash.body).detail).not.toContain('SLB-2027-201');
  });

  it('lets only one of two simultaneous bookings of one room through', async () => {
    const [first, second] = await Promise.all([
      book(coordinator, raceCases[0], { startsAt: at(3 * 24 * 60), room: 'Suite 7' }),
      book(coordinator, raceCases[1], {
        startsAt: at(3 * 24 * 60 + 15),
        room: 'Suite 7',
        operatorId: secondOperatorId,
      }),
    ]);
    expect([first.status, second.status].sort()).toEqual([201, 409]);
  });
});

describe('rebooking and cancelling', () => {
  it('rebooks with a reason: sequence raised, the change kept in the history', async () => {
    const missing = await coordinator.patch(`/api/cases/${adjacentCase}/booking`, {
      room: 'Interventional suite 3',
    });
    expect(missing.status).toBe(400);
    expect(fieldsOf(missing.body)).toEqual(['reason']);
    const response = await coordinator.patch(`/api/cases/${adjacentCase}/booking`, {
      room: 'Interventional suite 3',
      reason: 'Suite 1 closed for maintenance.',
    });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    const view = response.body as BookingView;
    expect(view.room).toBe('Interventional suite 3');
    expect(view.sequence).toBe(1);
    expect(view.history.map((entry) => entry.action)).toEqual(['booked', 'rebooked']);
    expect(view.history[1]).toMatchObject({
      reason: 'Suite 1 closed for maintenance.',
      by: { id: idOf('coordinator@emberline.test') },
      changes: [
        { field: 'room', before: 'Interventional suite 1', after: 'Interventional suite 3' },
      ],
    });
    expect(
      (await presenter.patch(`/api/cases/${adjacentCase}/booking`, { room: 'X', reason: 'y' }))
        .status,
    ).toBe(403);
  });

  it('cancels with a reason: the case decided again, the booking kept among the past ones', async () => {
    const path = `/api/cases/${adjacentCase}/booking`;
    const noReason = await coordinator.send('delete', path, {});
    expect(noReason.status).toBe(400);
    expect(fieldsOf(noReason.body)).toEqual(['reason']);
    expect((await proceduralist.send('delete', path, { reason: 'x' })).status).toBe(403);
    const response = await coordinator.send('delete', path, {
      reason: 'The patient asked for a later date.',
    });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body).toMatchObject({ state: 'cancelled', sequence: 2 });
    expect(await caseStatus(adjacentCase)).toBe('decided');
    const view = await logistics(coordinator, adjacentCase);
    expect(view.procedure).toBeNull();
    expect(view.isBookable).toBe(true);
    expect(view.past).toHaveLength(1);
    expect(view.past[0].history.map((entry) => [entry.action, entry.reason])).toEqual([
      ['booked', null],
      ['rebooked', 'Suite 1 closed for maintenance.'],
      ['cancelled', 'The patient asked for a later date.'],
    ]);
    expect((await coordinator.send('delete', path, { reason: 'again' })).status).toBe(404);
    // The room is free again.
    expect((await book(coordinator, adjacentCase, { startsAt: at(90) })).status).toBe(201);
  });
});

describe('the checklist', () => {
  let bookingId: string;
  const view = async () => (await logistics(coordinator, ablationCase)).procedure as BookingView;

  beforeAll(async () => {
    bookingId = (await view()).id;
  });

  it('has the three manual items open and the automatic ones met by a recent panel and series', async () => {
    const booking = await view();
    expect(booking.checklist?.items.map((entry) => [entry.key, entry.state])).toEqual([
      ['consent', 'open'],
      ['anticoagulation-plan', 'open'],
      ['fasting', 'open'],
      // The plan's series was uploaded today, the panel taken yesterday, the start a week ahead.
      ['recent-imaging', 'met'],
      ['inr', 'met'],
      ['platelets', 'met'],
      ['lab-age', 'met'],
    ]);
    expect(item(booking, 'inr').threshold).toMatchObject({ key: 'inr-max', value: 1.8 });
  });

  // SIR consensus guidelines on periprocedural management of thrombotic and bleeding risk
  // (Patel IJ et al., J Vasc Interv Radiol 2019;30:1168–1184), high bleeding risk: INR corrected
  // to within 1.5–1.8, platelets transfused below 50 × 10⁹/L [M] (from memory; the defaults take
  // 1.8 and 50, module README).
  it.each([
    [1.8, 'met'],
    [1.9, 'not-met'],
  ] as const)('INR %d against the maximum of 1.8 → %s', async (inr, state) => {
    await setLabs(ablationCase, { inr });
    expect(item(await view(), 'inr')).toMatchObject({
      state,
      finding: expect.stringContaining(`INR ${inr}`),
    });
  });

  it.each([
    [50, 'met'],
    [49, 'not-met'],
  ] as const)(
    'platelets %d × 10⁹/L against the minimum of 50 → %s',
    async (plateletsE9L, state) => {
      await setLabs(ablationCase, { plateletsE9L });
      expect(item(await view(), 'platelets').state).toBe(state);
    },
  );

  // Local practice (module README): a panel within 14 days of the start.
  it('fails a panel taken more than 14 days before the start, and passes one of exactly 14', async () => {
    await setLabs(ablationCase, { takenAt: new Date(start.getTime() - 15 * dayMs) });
    expect(item(await view(), 'lab-age').state).toBe('not-met');
    await setLabs(ablationCase, { takenAt: new Date(start.getTime() - 14 * dayMs) });
    expect(item(await view(), 'lab-age').state).toBe('met');
    await setLabs(ablationCase, { takenAt: new Date(Date.now() - dayMs), plateletsE9L: 120 });
  });

  it('reads pre-procedure labs recorded after the decision by the coordinator or a proceduralist', async () => {
    const panel = (inr: number) => ({
      takenAt: new Date(Date.now() - 3_600_000).toISOString(),
      bilirubin: { value: 1.1, unit: 'mg/dL' },
      albumin: { value: 3.8, unit: 'g/dL' },
      inr,
      creatinine: { value: 0.9, unit: 'mg/dL' },
      sodiumMmolL: 139,
      plateletsE9L: 140,
      ascites: 'none',
      encephalopathy: 'none',
      dialysisTwiceInPastWeek: false,
    });
    const post = (client: ApiClient, inr: number) =>
      client.post(`/api/cases/${ablationCase}/lab-panels`, panel(inr));
    expect((await post(member, 1.2)).status).toBe(403);
    const byCoordinator = await post(coordinator, 2.1);
    expect(byCoordinator.status).toBe(201);
    expect((byCoordinator.body as CaseDetail).permissions.canAddLabPanel).toBe(true);
    // The newest panel is the one in force: INR 2.1 over the maximum of 1.8 (SIR 2019, above).
    expect(item(await view(), 'inr')).toMatchObject({
      state: 'not-met',
      finding: expect.stringContaining('INR 2.1'),
    });
    expect((await post(proceduralist, 1.3)).status).toBe(201);
    expect(item(await view(), 'inr').state).toBe('met');
    // The panels the board saw stay as they were: no correction once decided.
    const detail = (await presenter.get(`/api/cases/${ablationCase}`)).body as CaseDetail;
    const first = detail.labPanels[detail.labPanels.length - 1];
    const correction = await presenter.post(
      `/api/cases/${ablationCase}/lab-panels/${first.id}/withdrawal`,
      { reason: 'Entered against the wrong case.' },
    );
    expect(correction.status).toBe(409);
  });

  it('is ticked by the coordinator and the operator, not by a member (403); automatic items are not ticked (400)', async () => {
    const tick = (client: ApiClient, key: string, isMet = true) =>
      client.put(`/api/bookings/${bookingId}/checklist/${key}`, { isMet });
    expect((await tick(member, 'consent')).status).toBe(403);
    expect((await tick(presenter, 'consent')).status).toBe(403);
    expect((await tick(south, 'consent')).status).toBe(404);
    const automatic = await tick(coordinator, 'inr');
    expect(automatic.status).toBe(400);
    expect(fieldsOf(automatic.body)).toEqual(['key']);
    expect((await tick(coordinator, 'blood-group')).status).toBe(404);
    expect((await tick(coordinator, 'consent')).status).toBe(200);
    expect((await tick(proceduralist, 'anticoagulation-plan')).status).toBe(200);
    const last = await tick(coordinator, 'fasting');
    expect(last.status).toBe(200);
    expect(item(last.body as BookingView, 'anticoagulation-plan')).toMatchObject({
      state: 'met',
      checkedBy: { displayName: 'Dr Mei Tanaka' },
    });
  });

  it('refuses to confirm with a failed item (409 naming it), then confirms once it is overridden', async () => {
    await setLabs(ablationCase, { inr: 1.9 });
    const refused = await coordinator.post(`/api/bookings/${bookingId}/confirm`);
    expect(refused.status).toBe(409);
    expect(problem(refused.body).detail).toContain('INR within the limit (INR 1.9');
    expect(problem(refused.body).detail).not.toContain('Platelet');

    const path = `/api/bookings/${bookingId}/checklist/inr/override`;
    const noReason = await coordinator.post(path, { reason: ' ' });
    expect(noReason.status).toBe(400);
    expect(fieldsOf(noReason.body)).toEqual(['reason']);
    expect((await member.post(path, { reason: 'x' })).status).toBe(403);
    expect(
      (
        await coordinator.post(`/api/bookings/${bookingId}/checklist/platelets/override`, {
          reason: 'x',
        })
      ).status,
    ).toBe(409);
    const reason = 'Vitamin K given; INR to be repeated on the morning of the procedure.';
    const overridden = await proceduralist.post(path, { reason });
    expect(overridden.status, JSON.stringify(overridden.body)).toBe(200);
    const booking = overridden.body as BookingView;
    expect(item(booking, 'inr')).toMatchObject({
      state: 'overridden',
      override: { reason, by: { displayName: 'Dr Mei Tanaka' } },
    });
    expect(booking.checklist?.isComplete).toBe(true);
    expect(booking.history.at(-1)).toMatchObject({
      action: 'override',
      reason,
      changes: [{ field: 'inr', after: 'overridden' }],
    });
    expect((await proceduralist.post(`/api/bookings/${bookingId}/confirm`)).status).toBe(403);
    const confirmed = await coordinator.post(`/api/bookings/${bookingId}/confirm`);
    expect(confirmed.status, JSON.stringify(confirmed.body)).toBe(200);
    expect(confirmed.body).toMatchObject({
      state: 'confirmed',
      permissions: { canConfirm: false, canCheck: false },
    });
    expect((confirmed.body as BookingView).history.at(-1)?.action).toBe('confirmed');
  });
});

describe('the thresholds', () => {
  it('are listed for administrators only, with their sources', async () => {
    expect((await coordinator.get('/api/admin/checklist-thresholds')).status).toBe(403);
    const response = await admin.get('/api/admin/checklist-thresholds');
    expect(response.status).toBe(200);
    const rows = response.body as ThresholdView[];
    expect(rows.map((row) => [row.key, row.value, row.unit])).toEqual([
      ['inr-max', 1.8, 'INR'],
      ['platelets-min', 50, '10^9/L'],
      ['lab-max-age-days', 14, 'days'],
      ['imaging-max-age-days', 30, 'days'],
    ]);
    expect(rows[0].source).toContain('J Vasc Interv Radiol 2019;30:1168');
    expect(rows[0].source).toContain('From memory');
    expect(rows[2].source).toContain('Local practice');
  });

  it('are changed by an administrator with a source (400 without), audited, and the checklist follows', async () => {
    const put = (client: ApiClient, body: object) =>
      client.put('/api/admin/checklist-thresholds/inr-max', body);
    const noSource = await put(admin, { value: 2 });
    expect(noSource.status).toBe(400);
    expect(fieldsOf(noSource.body)).toEqual(['source']);
    expect((await put(coordinator, { value: 2, source: 'x' })).status).toBe(403);
    expect(
      (await admin.put('/api/admin/checklist-thresholds/blood-group', { value: 2, source: 'x' }))
        .status,
    ).toBe(404);

    await setLabs(roomCase, { inr: 1.9 });
    const booked = await book(coordinator, roomCase, {
      startsAt: at(5 * 24 * 60),
      room: 'Suite 5',
    });
    expect(booked.status, JSON.stringify(booked.body)).toBe(201);
    expect(item(booked.body as BookingView, 'inr').state).toBe('not-met');

    const changed = await put(admin, { value: 2, source: 'Local protocol IR-14, 2026' });
    expect(changed.status).toBe(200);
    expect(changed.body).toMatchObject({
      key: 'inr-max',
      value: 2,
      source: 'Local protocol IR-14, 2026',
      updatedBy: { displayName: 'Ada Okafor' },
    });
    const after = (await logistics(coordinator, roomCase)).procedure as BookingView;
    expect(item(after, 'inr')).toMatchObject({ state: 'met', threshold: { value: 2 } });
    const events = await testApp.orm.em
      .fork()
      .find(AuditEvent, { action: 'checklist-threshold.update' });
    expect(events.map((event) => event.detail)).toEqual([
      expect.objectContaining({
        key: 'inr-max',
        after: { value: 2, source: 'Local protocol IR-14, 2026' },
      }),
    ]);
    await put(admin, { value: 1.8, source: (changed.body as ThresholdView).source });
  });
});

describe('the treatment and the follow-up', () => {
  let treatment: TreatmentView;
  const performedAt = new Date(Date.now() - 2 * 60 * 60_000);
  const treatmentBody = {
    performedAt: performedAt.toISOString(),
    applicatorsUsed: 'One microwave antenna, two overlapping positions.',
    complicationGrade: 'I',
    complicationNote: 'Pain at the entry site, settled with oral analgesia.',
  };

  it('is recorded by the booking’s operator only', async () => {
    const path = `/api/cases/${ablationCase}/treatment`;
    for (const client of [coordinator, presenter, member, secondOperator]) {
      expect((await client.post(path, treatmentBody)).status).toBe(403);
    }
    expect((await admin.post(path, treatmentBody)).status).toBe(404);
    const noNote = await proceduralist.post(path, {
      ...treatmentBody,
      complicationNote: undefined,
    });
    expect(noNote.status).toBe(400);
    expect(fieldsOf(noNote.body)).toEqual(['complicationNote']);
    const response = await proceduralist.post(path, treatmentBody);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    treatment = response.body as TreatmentView;
  });

  // The first contrast-enhanced CT or MRI about four weeks after ablation: common practice
  // (image-guided tumour ablation reporting standards, Ahmed M et al., Radiology
  // 2014;273:241–260) [M]; the proposed date is recomputed here as performedAt + 28 days [C].
  it('treats the case, marks the booking done and proposes the follow-up four weeks later', async () => {
    expect(treatment).toMatchObject({
      performedAt: performedAt.toISOString(),
      operator: { displayName: 'Dr Mei Tanaka' },
      complicationGrade: 'I',
      followUp: {
        proposedDate: new Date(performedAt.getTime() + 28 * dayMs).toISOString(),
        interval: '4 weeks',
      },
    });
    expect(treatment.followUp.basis).toContain('Radiology 2014;273:241');
    expect(await caseStatus(ablationCase)).toBe('treated');
    const view = await logistics(coordinator, ablationCase);
    expect(view.procedure?.state).toBe('done');
    expect(view.treatment?.complicationNote).toBe(treatmentBody.complicationNote);
    expect(
      (await proceduralist.post(`/api/cases/${ablationCase}/treatment`, treatmentBody)).status,
    ).toBe(403);
  });

  it('puts the treated case in the queue as a follow-up to book', async () => {
    const entry = (await queue(coordinator, '?kind=follow-up')).find(
      (found) => found.caseId === ablationCase,
    );
    expect(entry).toMatchObject({
      kind: 'follow-up',
      caseStatus: 'treated',
      dueDate: treatment.followUp.proposedDate,
      booking: null,
    });
  });

  it('books the follow-up imaging for a coordinator, with the room rules of a booking', async () => {
    const path = `/api/cases/${ablationCase}/follow-up`;
    const body = {
      startsAt: new Date(performedAt.getTime() + 28 * dayMs).toISOString(),
      durationMin: 30,
      room: 'CT 2',
      modality: 'ct',
    };
    expect((await presenter.post(path, body)).status).toBe(403);
    expect((await coordinator.post(path, { ...body, modality: 'pet' })).status).toBe(400);
    // A procedure in that room at that time: the follow-up is told the room is taken.
    const procedure = await book(coordinator, urgentCase, {
      startsAt: body.startsAt,
      room: 'CT 2',
      operatorId: secondOperatorId,
    });
    expect(procedure.status, JSON.stringify(procedure.body)).toBe(201);
    const taken = await coordinator.post(path, body);
    expect(taken.status).toBe(409);
    expect(problem(taken.body).detail).toMatch(
      /^Room clash: CT 2 is booked .* for case NLB-2027-104\.$/,
    );
    expect(
      (
        await coordinator.send('delete', `/api/cases/${urgentCase}/booking`, {
          reason: 'Room needed.',
        })
      ).status,
    ).toBe(200);
    const response = await coordinator.post(path, body);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect(response.body).toMatchObject({
      kind: 'follow-up-imaging',
      modality: 'ct',
      operator: null,
      checklist: null,
      state: 'booked',
    });
    const clash = await coordinator.post(`/api/cases/${ablationCase}/follow-up`, body);
    expect(clash.status).toBe(409);
    // The care team's mail, as for a procedure (no operator on a follow-up).
    const followUpId = (response.body as BookingView).id;
    const mails = await testApp.orm.em
      .fork()
      .find(MailDelivery, { reference: `booking:${followUpId}` });
    expect(mails.map((mail) => [mail.subject, [...mail.recipients].sort()])).toEqual([
      [
        'Follow-up imaging booked: NLB-2026-014 Contrast-enhanced CT',
        ['coordinator@emberline.test', 'presenter@emberline.test'],
      ],
    ]);
    expect((await logistics(presenter, ablationCase)).followUp?.room).toBe('CT 2');
  });

  // Read back with poppler-utils' pdftotext, as the summary PDF's own test does.
  it('prints the booking, its checklist and the treatment on the board summary’s last page', async () => {
    const response = await coordinator
      .get(`/api/cases/${ablationCase}/summary.pdf`)
      .buffer(true)
      .parse((res, done) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => done(null, Buffer.concat(chunks)));
      });
    expect(response.status).toBe(200);
    const directory = mkdtempSync(join(tmpdir(), 'emberline-booking-pdf-'));
    try {
      const file = join(directory, 'summary.pdf');
      writeFileSync(file, response.body as Buffer);
      const pages = execFileSync('pdftotext', ['-enc', 'UTF-8', file, '-'], { encoding: 'utf8' })
        .split('\f')
        .slice(0, -1)
        .map((page) => page.replace(/\s+/g, ' '));
      const last = pages.at(-1) ?? '';
      const when = start.toISOString().slice(0, 16).replace('T', ' ');
      expect(last).toContain(`Booking When: ${when} UTC`);
      expect(last).toContain('Room: Interventional suite 1');
      expect(last).toContain('Operator: Dr Mei Tanaka');
      expect(last).toContain('Anaesthesia: General anaesthesia');
      expect(last).toContain('State: Done');
      expect(last).toContain('Follow-up imaging When:');
      expect(last).toContain('Modality: Contrast-enhanced CT');
      expect(last).toContain('Treatment Performed:');
      expect(last).toContain('Complication (Clavien–Dindo): Grade I');
      expect(last).toContain(
        `Follow-up imaging proposed: ${treatment.followUp.proposedDate.slice(0, 10)}`,
      );
      // The booking page names the case by its code only (the first page has the demographics).
      expect(last).not.toMatch(/year of birth|female|\b19[0-9]{2}\b/i);
    } finally {
      rmSync(directory, { recursive: true, force: true });
    }
  });

  it('markDueFollowUps turns the case follow-up-due once its date comes, tells the coordinators once', async () => {
    const dueAt = new Date(performedAt.getTime() + 28 * dayMs);
    expect(
      await markDueFollowUps(testApp.orm, testApp.mail, new Date(dueAt.getTime() - 60_000)),
    ).toEqual([]);
    expect(await caseStatus(ablationCase)).toBe('treated');
    expect(await markDueFollowUps(testApp.orm, testApp.mail, dueAt)).toEqual([ablationCase]);
    expect(await caseStatus(ablationCase)).toBe('follow-up-due');
    expect(
      await markDueFollowUps(testApp.orm, testApp.mail, new Date(dueAt.getTime() + dayMs)),
    ).toEqual([]);
    const mails = await testApp.orm.em
      .fork()
      .find(MailDelivery, { reference: `follow-up:${ablationCase}` });
    expect(mails.map((mail) => [mail.subject, mail.recipients])).toEqual([
      ['Follow-up imaging due: NLB-2026-014', ['coordinator@emberline.test']],
    ]);
    const entry = (await queue(coordinator)).find((found) => found.caseId === ablationCase);
    expect(entry).toMatchObject({ kind: 'follow-up', caseStatus: 'follow-up-due' });
  });

  it('cancels the follow-up with a reason', async () => {
    const path = `/api/cases/${ablationCase}/follow-up`;
    expect((await coordinator.send('delete', path, {})).status).toBe(400);
    const response = await coordinator.send('delete', path, { reason: 'Moved to MRI.' });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body).toMatchObject({ state: 'cancelled', kind: 'follow-up-imaging' });
    const view = await logistics(coordinator, ablationCase);
    expect(view.followUp).toBeNull();
    expect(view.past.map((booking) => booking.kind)).toEqual(['follow-up-imaging']);
  });
});

describe('without a mail service', () => {
  it('still books, and the view says no notification was sent', async () => {
    const without = await startTestApp();
    try {
      const client = new ApiClient(without.app);
      await client.signIn('coordinator@emberline.test', 'ember-demo-2026');
      const response = await client.post(`/api/cases/${mailOffCase}/booking`, {
        ...bookingBody({ startsAt: at(9 * 24 * 60), room: 'Suite 9' }),
      });
      expect(response.status, JSON.stringify(response.body)).toBe(201);
      expect(response.body).toMatchObject({ isMailEnabled: false, notifications: [] });
    } finally {
      await without.close();
    }
  });
});
