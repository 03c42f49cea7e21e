/**
 * Closing a board meeting and its frozen minutes through the API: only the chair closes; open
 * items close, undecided cases go back to ready for board, whoever is still in the room is
 * marked as left; the minutes (attendance per member, each item's plans with their newest
 * verdict, tally, comments marked for the minutes and decision, quorum at close) are written
 * once with their SHA-256 and read back byte for byte, whatever changes afterwards. Rules of
 * the product: DEVELOPERS.md ("Principles") and server/src/modules/meetings/README.md.
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  AssessmentResult,
  AssessmentSnapshot,
  BoardMemberView,
  CaseDetail,
  CommentView,
  DecisionView,
  MeetingView,
  MinutesView,
  PlanView,
  ProblemDetails,
  VerdictLevel,
} from '@emberline/shared';
import { Assessment } from '../../server/src/modules/assessments/assessment.entity';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { AgendaItem } from '../../server/src/modules/meetings/agenda-item.entity';
import { Attendance } from '../../server/src/modules/meetings/attendance.entity';
import { Meeting } from '../../server/src/modules/meetings/meeting.entity';
import { Minutes } from '../../server/src/modules/meetings/minutes.entity';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import { SafetyProfile } from '../../server/src/modules/plans/safety-profile.entity';
import { User } from '../../server/src/modules/users/user.entity';
import { RecordingBoardRoom } from './board-room-recorder';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { boardMembers, meetingWithAgenda, plansInStates } from './decision-fixtures';

const room = new RecordingBoardRoom();
let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;
let member: ApiClient;
let proceduralist: ApiClient;
let coordinator: ApiClient;
let south: ApiClient;
let admin: ApiClient;
let memberOf: (email: string) => BoardMemberView;
let meeting: MeetingView;
let plans: PlanView[];
const minutesAt = () => `/api/meetings/${meeting.id}/minutes`;
const problem = (body: unknown) => body as ProblemDetails;
const minutes = (text: string) => JSON.parse(text) as MinutesView;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

/**
 * An assessment row of the plan that ended as `status` with the given verdict level, requested
 * `minutesAgo`: the minutes read only its status, time and verdict level, so the rest of the
 * engine's result is left out of this invented record.
 */
async function assessmentOf(
  planId: string,
  status: 'done' | 'failed',
  level: VerdictLevel | null,
  minutesAgo: number,
): Promise<void> {
  const em = testApp.orm.em.fork();
  const safetyProfile = await em.findOneOrFail(SafetyProfile, { isDefault: true });
  const assessment = new Assessment({
    plan: em.getReference(NeedlePlan, planId, { wrapped: true }),
    inputsHash: `fixture-${planId}-${minutesAgo}`,
    engineVersion: 'fixture',
    requestedBy: em.getReference(User, memberOf('presenter@emberline.test').userId, {
      wrapped: true,
    }),
    safetyProfile: em.getReference(SafetyProfile, safetyProfile.id, { wrapped: true }),
    snapshot: null as unknown as AssessmentSnapshot,
  });
  assessment.status = status;
  assessment.progress = 1;
  assessment.createdAt = new Date(Date.now() - minutesAgo * 60_000);
  if (level) assessment.result = { verdict: { level, reasons: [] } } as unknown as AssessmentResult;
  else assessment.error = 'The worker stopped.';
  em.persist(assessment);
  await em.flush();
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
  memberOf = await boardMembers(member, ids.northBoard);
  const quorum = await admin.put(`/api/admin/boards/${ids.northBoard}/quorum`, {
    requiredSpecialties: ['diagnostic-radiology', 'interventional-radiology'],
  });
  expect(quorum.status).toBe(200);
  const ready = await presenter.patch(`/api/cases/${ids.northDraft}`, {
    status: 'ready-for-board',
  });
  expect(ready.status, JSON.stringify(ready.body)).toBe(200);
  ({ plans } = await plansInStates(
    testApp.orm,
    presenter,
    memberOf('presenter@emberline.test').userId,
    ids.northReady,
    [
      { name: 'Plan A', status: 'assessed' },
      { name: 'Plan B', status: 'assessed' },
      { name: 'Plan C', status: 'draft' },
    ],
  ));
  // Plan A: assessed twice, the newer run with cautions. Plan B: its newer run failed.
  await assessmentOf(plans[0].id, 'done', 'not-acceptable', 120);
  await assessmentOf(plans[0].id, 'done', 'acceptable-with-cautions', 60);
  await assessmentOf(plans[1].id, 'done', 'acceptable', 120);
  await assessmentOf(plans[1].id, 'failed', null, 60);
  // Chaired by the proceduralist: the chair also signs the decision.
  meeting = await meetingWithAgenda(
    presenter,
    ids.northBoard,
    memberOf('proceduralist@emberline.test').userId,
    [ids.northReady, ids.northDraft],
  );
}, 60_000);

afterAll(async () => {
  await testApp?.close();
});

describe('before the close', () => {
  it('has no minutes yet (404)', async () => {
    const response = await member.get(minutesAt());
    expect(response.status).toBe(404);
    expect(problem(response.body).detail).toBe(
      'The meeting has no minutes yet: they are written when its chair closes it.',
    );
  });

  it('is closed by its chair only: 403 for the board’s other members and administrators, 404 off the board', async () => {
    for (const client of [member, presenter, coordinator, admin]) {
      const response = await client.post(`/api/meetings/${meeting.id}/close`);
      expect(response.status).toBe(403);
      expect(problem(response.body).detail).toBe('Only the chair of the meeting closes it.');
    }
    expect((await south.post(`/api/meetings/${meeting.id}/close`)).status).toBe(404);
  });
});

describe('the close and its minutes', () => {
  const [first, second] = [0, 1];
  let markedComment: CommentView;
  let decision: DecisionView;
  let closeText: string;
  let view: MinutesView;
  const roomVisits = {
    firstJoined: new Date(Date.now() - 50 * 60_000),
    firstLeft: new Date(Date.now() - 40 * 60_000),
    secondJoined: new Date(Date.now() - 30 * 60_000),
  };

  beforeAll(async () => {
    const [itemOne, itemTwo] = meeting.agenda.map((item) => item.id);
    // The member attends by voting over the API.
    for (const vote of [
      { option: plans[0].id, position: 'support' },
      { option: 'tace', position: 'oppose' },
    ]) {
      const cast = await member.post(`/api/agenda-items/${itemOne}/votes`, vote);
      expect(cast.status, JSON.stringify(cast.body)).toBe(200);
    }
    const posted: CommentView[] = [];
    for (const body of [
      'The segment VII lesion lies 9 mm from the right hepatic vein.',
      'Could we take the next case before the break?',
    ]) {
      const response = await member.post(`/api/agenda-items/${itemOne}/comments`, { body });
      expect(response.status, JSON.stringify(response.body)).toBe(201);
      posted.push(response.body as CommentView);
    }
    const marked = await proceduralist.patch(`/api/comments/${posted[0].id}`, {
      isForMinutes: true,
    });
    expect(marked.status, JSON.stringify(marked.body)).toBe(200);
    markedComment = marked.body as CommentView;
    // The presenter was in the room twice (what the session's join and leave write), and
    // is still there when the chair closes.
    const em = testApp.orm.em.fork();
    const presenterId = memberOf('presenter@emberline.test').userId;
    for (const [joinedAt, leftAt] of [
      [roomVisits.firstJoined, roomVisits.firstLeft],
      [roomVisits.secondJoined, null],
    ] as const) {
      const visit = new Attendance({
        meeting: em.getReference(Meeting, meeting.id, { wrapped: true }),
        user: em.getReference(User, presenterId, { wrapped: true }),
        specialty: 'hepatology',
      });
      visit.joinedAt = joinedAt;
      visit.leftAt = leftAt;
      em.persist(visit);
    }
    await em.flush();
    // Without an interventional radiologist attending, the chair records with a reason.
    const signed = await proceduralist.post(`/api/cases/${ids.northReady}/decision`, {
      outcome: 'ablation-mw',
      planId: plans[0].id,
      rationale:
        'Single lesion under 3 cm, safe access from the right; the board supports ablation.',
      password: demoPassword,
      quorumOverrideReason: 'The interventional radiologist was called to an emergency.',
    });
    expect(signed.status, JSON.stringify(signed.body)).toBe(201);
    decision = signed.body as DecisionView;
    expect(decision.quorum.isMet).toBe(false);
    expect(decision.quorumOverrideReason).toBe(
      'The interventional radiologist was called to an emergency.',
    );
    // The chair attends the second item by voting.
    const cast = await proceduralist.post(`/api/agenda-items/${itemTwo}/votes`, {
      option: 'surveillance',
      position: 'support',
    });
    expect(cast.status, JSON.stringify(cast.body)).toBe(200);

    const closed = await proceduralist.post(`/api/meetings/${meeting.id}/close`);
    expect(closed.status, closed.text).toBe(200);
    expect(closed.headers['content-type']).toMatch(/^application\/json/);
    closeText = closed.text;
    view = minutes(closeText);
  });

  // SHA-256 test vector "abc" from FIPS 180-2, Appendix B.1 (from memory), checked before the
  // same function checks the minutes.
  it('carries the SHA-256 of the stored content text, as stored', async () => {
    expect(createHash('sha256').update('abc').digest('hex')).toBe(
      'ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad',
    );
    const stored = await testApp.orm.em.fork().findOneOrFail(Minutes, { meeting: meeting.id });
    expect(closeText.endsWith(`"content":${stored.content}}`)).toBe(true);
    expect(createHash('sha256').update(stored.content, 'utf8').digest('hex')).toBe(view.sha256);
    expect(stored.sha256).toBe(view.sha256);
    expect(view.meetingId).toBe(meeting.id);
  });

  it('closes the meeting, its items and its open visits, and sends undecided cases back', async () => {
    const closedAt = view.content.closedAt;
    const em = testApp.orm.em.fork();
    const stored = await em.findOneOrFail(Meeting, meeting.id);
    expect(stored.state).toBe('closed');
    expect(stored.closedAt?.toISOString()).toBe(closedAt);
    expect(stored.closedBy?.id).toBe(memberOf('proceduralist@emberline.test').userId);
    const items = await em.find(
      AgendaItem,
      { meeting: meeting.id },
      { orderBy: { position: 'asc' } },
    );
    // The first closed when its decision was signed; the second when the meeting closed.
    expect(items.map((item) => item.closedAt?.toISOString())).toEqual([
      decision.signedAt,
      closedAt,
    ]);
    const undecided = (await presenter.get(`/api/cases/${ids.northDraft}`)).body as CaseDetail;
    expect(undecided.status).toBe('ready-for-board');
    expect(undecided.nextMeeting).toBeNull();
    const decided = (await presenter.get(`/api/cases/${ids.northReady}`)).body as CaseDetail;
    expect(decided.status).toBe('decided');
    const open = await em.count(Attendance, { meeting: meeting.id, leftAt: null });
    expect(open).toBe(0);
    const audited = await em.find(AuditEvent, { action: 'meeting.close', entityId: meeting.id });
    expect(audited).toHaveLength(1);
    expect(audited[0].detail).toMatchObject({ casesReturnedToReady: [ids.northDraft] });
    expect(room.emitted.at(-1)).toEqual({
      meetingId: meeting.id,
      event: 'agenda:changed',
      payload: { meetingId: meeting.id, reason: 'closed' },
    });
  });

  it('records who attended: each member once, first join to last leave, and how', () => {
    const { content } = view;
    const byName = new Map(content.attendance.map((entry) => [entry.displayName, entry]));
    const presenterView = memberOf('presenter@emberline.test');
    expect(byName.get(presenterView.displayName)).toEqual({
      userId: presenterView.userId,
      displayName: presenterView.displayName,
      specialty: 'hepatology',
      firstJoinedAt: roomVisits.firstJoined.toISOString(),
      // Still in the room at the close: left when the meeting closed.
      lastLeftAt: content.closedAt,
      via: 'room',
    });
    const memberView = memberOf('member@emberline.test');
    expect(byName.get(memberView.displayName)).toMatchObject({
      userId: memberView.userId,
      specialty: 'diagnostic-radiology',
      via: 'vote',
    });
    expect(byName.get(memberOf('proceduralist@emberline.test').displayName)).toMatchObject({
      specialty: 'interventional-radiology',
      via: 'vote',
    });
    expect(content.attendance).toHaveLength(3);
    // Both radiologists attended by the close: quorum as it stood then.
    expect(content.quorum).toMatchObject({ isMet: true, missing: [], presentCount: 2 });
    expect(content.chair).toBe(memberOf('proceduralist@emberline.test').displayName);
    expect(content.closedBy).toBe(content.chair);
    expect(content.boardName).toBe('North Liver Board');
  });

  it('records each item in agenda order: plans with their newest verdict, tally, marked comments, decision', () => {
    const items = view.content.items;
    expect(items.map((item) => [item.position, item.caseCode])).toEqual([
      [1, 'NLB-2026-014'],
      [2, 'NLB-2026-019'],
    ]);
    expect(items[first].presenterName).toBe(memberOf('presenter@emberline.test').displayName);
    expect(items[first].plans).toEqual([
      { id: plans[0].id, name: 'Plan A', status: 'selected', verdict: 'acceptable-with-cautions' },
      // Its newest run failed: no verdict to report, although an older run had one.
      { id: plans[1].id, name: 'Plan B', status: 'set-aside', verdict: null },
      { id: plans[2].id, name: 'Plan C', status: 'set-aside', verdict: null },
    ]);
    const row = (option: string) => items[first].tally.find((entry) => entry.option === option);
    expect(row(plans[0].id)).toMatchObject({ label: 'Plan A', support: 1, oppose: 0, abstain: 0 });
    expect(row('tace')).toMatchObject({ support: 0, oppose: 1, abstain: 0 });
    expect(items[first].comments).toEqual([
      {
        author: memberOf('member@emberline.test').displayName,
        body: markedComment.body,
        createdAt: markedComment.createdAt,
      },
    ]);
    expect(items[first].decision).toEqual(decision);
    expect(items[second].decision).toBeNull();
    expect(items[second].plans).toEqual([]);
    expect(items[second].tally.find((entry) => entry.option === 'surveillance')).toMatchObject({
      support: 1,
    });
  });

  it('closes once (409)', async () => {
    const again = await proceduralist.post(`/api/meetings/${meeting.id}/close`);
    expect(again.status).toBe(409);
  });

  it('is read by the board’s members and administrators, byte for byte as written, and by nobody else', async () => {
    for (const client of [member, coordinator, presenter, admin]) {
      const response = await client.get(minutesAt());
      expect(response.status).toBe(200);
      expect(response.text).toBe(closeText);
    }
    expect((await south.get(minutesAt())).status).toBe(404);
  });

  it('stays byte for byte the same whatever changes afterwards', async () => {
    const [itemOne, itemTwo] = meeting.agenda.map((item) => item.id);
    const amended = await proceduralist.post(`/api/cases/${ids.northReady}/decision/amendments`, {
      reason: 'Conditions were not recorded',
      text: 'Contrast CT at four weeks.',
      password: demoPassword,
    });
    expect(amended.status).toBe(201);
    const comment = await member.post(`/api/agenda-items/${itemTwo}/comments`, {
      body: 'A late thought.',
    });
    expect(comment.status).toBe(409);
    const vote = await member.post(`/api/agenda-items/${itemTwo}/votes`, {
      option: 'surveillance',
      position: 'oppose',
    });
    expect(vote.status).toBe(409);
    const unmark = await proceduralist.patch(`/api/comments/${markedComment.id}`, {
      isForMinutes: false,
    });
    expect(unmark.status).toBe(409);
    const em = testApp.orm.em.fork();
    const visits = await em.find(Attendance, { meeting: meeting.id });
    for (const visit of visits) visit.leftAt = new Date();
    em.persist(
      new Attendance({
        meeting: em.getReference(Meeting, meeting.id, { wrapped: true }),
        user: em.getReference(User, memberOf('member@emberline.test').userId, { wrapped: true }),
        specialty: 'diagnostic-radiology',
      }),
    );
    await em.flush();
    const renamed = await admin.patch(
      `/api/admin/users/${memberOf('proceduralist@emberline.test').userId}`,
      { displayName: 'Dr Renamed After The Meeting' },
    );
    expect(renamed.status, JSON.stringify(renamed.body)).toBe(200);
    expect(
      (await testApp.orm.em.fork().findOneOrFail(AgendaItem, itemOne)).closedAt,
    ).not.toBeNull();

    // The live record moved on …
    const live = (await member.get(`/api/cases/${ids.northReady}/decision`)).body as DecisionView;
    expect(live.signer.displayName).toBe('Dr Renamed After The Meeting');
    expect(live.amendments).toHaveLength(1);
    // … the minutes did not.
    const read = await member.get(minutesAt());
    expect(read.status).toBe(200);
    expect(read.text).toBe(closeText);
    expect(minutes(read.text).content.items[first].decision?.signer.displayName).toBe(
      memberOf('proceduralist@emberline.test').displayName,
    );
  });
});
