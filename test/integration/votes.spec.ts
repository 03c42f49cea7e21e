/**
 * Votes and comments on an agenda item through the API: the tally's options and exact counts
 * when votes are retried, changed and withdrawn; who may vote, comment and mark; a closed item or
 * meeting; bad options; comment threads; attendance by vote; what reaches the meeting's room.
 *
 * Outside references (from memory, cited by section):
 * - RFC 9110 §9.2.2 (idempotent: the effect of several identical requests is that of one). The
 *   product makes casting the same position again change nothing, so a retried request or
 *   socket event counts once (common practice for at-least-once delivery).
 * - RFC 9110 §15.5.1 400, §15.5.4 403, §15.5.5 404, §15.5.10 409; RFC 9457 §3 problem details
 *   (`errors` naming each field is the project's extension member).
 * - OWASP ASVS 5.0 §8 (access control: deny by default, per record): a record of another board
 *   answers 404 as one that does not exist; a forbidden action on a visible record 403.
 * Product rules (DEVELOPERS.md, "Roles"): presenting physicians, board members and
 * proceduralists vote and comment; nurse coordinators and administrators do not.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  treatmentLabels,
  treatments,
  type AgendaItemVotes,
  type BoardMemberView,
  type CommentView,
  type MeetingView,
  type PlanStatus,
  type PresenceView,
  type ProblemDetails,
  type TallyView,
} from '@emberline/shared';
import { demoMicrowaveProfileName } from '../../server/seeders/demo-plans';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { BoardMembership } from '../../server/src/modules/boards/board-membership.entity';
import { Board } from '../../server/src/modules/boards/board.entity';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { AgendaItem } from '../../server/src/modules/meetings/agenda-item.entity';
import { Attendance } from '../../server/src/modules/meetings/attendance.entity';
import { Meeting } from '../../server/src/modules/meetings/meeting.entity';
import { ApplicatorProfile } from '../../server/src/modules/plans/applicator-profile.entity';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import { User } from '../../server/src/modules/users/user.entity';
import { tallyOf } from '../../server/src/modules/votes/tally';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { RecordingBoardRoom } from './board-room-recorder';
import { insertSeriesRow, planBody } from './plan-fixtures';

let testApp: TestApp;
let ids: DemoIds;
const room = new RecordingBoardRoom();
let presenter: ApiClient;
let member: ApiClient;
let proceduralist: ApiClient;
let coordinator: ApiClient;
let admin: ApiClient;
let south: ApiClient;
let members: BoardMemberView[];
/** A scheduled meeting of the north board, the proceduralist in the chair. */
let meetingId: string;
/** Its first item (northReady) and its second (northDraft, made ready for the purpose). */
let itemId: string;
let otherItemId: string;
/** Plans of northReady: two assessed (the options), one draft (not an option). */
let planA: string;
let planB: string;
let draftPlan: string;
/** An assessed plan of another case (northDraft). */
let foreignPlan: string;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

const userId = (email: string) => {
  const found = members.find((entry) => entry.email === email);
  if (!found) throw new Error(`${email} is not a member`);
  return found.userId;
};

async function insertPlans(
  caseId: string,
  seriesId: string,
  plans: { name: string; status: PlanStatus }[],
): Promise<string[]> {
  const em = testApp.orm.em.fork();
  const found = await em.findOneOrFail(ClinicalCase, caseId);
  const profile = await em.findOneOrFail(ApplicatorProfile, { name: demoMicrowaveProfileName });
  const base = Date.now();
  const made = plans.map(({ name, status }, index) => {
    const plan = new NeedlePlan({
      clinicalCase: em.getReference(ClinicalCase, found.id, { wrapped: true }),
      series: em.getReference(ImageSeries, seriesId, { wrapped: true }),
      author: found.presenter,
      name,
      applicators: planBody(seriesId, profile.id).applicators,
    });
    plan.status = status;
    // Distinct times: the tally lists plans oldest first.
    plan.createdAt = new Date(base + index * 1000);
    return plan;
  });
  await em.persist(made).flush();
  return made.map((plan) => plan.id);
}

const vote = (client: ApiClient, body: object, item = itemId) =>
  client.post(`/api/agenda-items/${item}/votes`, body);
const rowOf = (tally: TallyView, option: string) => {
  const row = tally.rows.find((entry) => entry.option === option);
  if (!row) throw new Error(`${option} is not an option`);
  return { support: row.support, oppose: row.oppose, abstain: row.abstain };
};
const auditCount = (action: 'vote.cast' | 'comment.post' | 'comment.mark', entityId: string) =>
  testApp.orm.em.fork().count(AuditEvent, { action, entityId });

async function setItemClosed(id: string, closedAt: Date | null) {
  const em = testApp.orm.em.fork();
  const item = await em.findOneOrFail(AgendaItem, id);
  item.closedAt = closedAt;
  await em.flush();
}

async function setMeetingState(id: string, state: 'scheduled' | 'in-session' | 'closed') {
  const em = testApp.orm.em.fork();
  const meeting = await em.findOneOrFail(Meeting, id);
  meeting.state = state;
  await em.flush();
}

beforeAll(async () => {
  testApp = await startTestApp({}, { boardRoom: room });
  ids = await resetToDemo(testApp.orm);
  presenter = await signedIn('presenter@emberline.test');
  member = await signedIn('member@emberline.test');
  proceduralist = await signedIn('proceduralist@emberline.test');
  coordinator = await signedIn('coordinator@emberline.test');
  admin = await signedIn('admin@emberline.test');
  south = await signedIn('south@emberline.test');
  members = (await member.get(`/api/boards/${ids.northBoard}/members`)).body as BoardMemberView[];

  const scheduled = await presenter.post(`/api/boards/${ids.northBoard}/meetings`, {
    startsAt: new Date(Date.now() + 7 * 86_400_000).toISOString(),
    durationMin: 90,
    chairId: userId('proceduralist@emberline.test'),
  });
  expect(scheduled.status).toBe(201);
  meetingId = (scheduled.body as MeetingView).id;
  // The second item needs a second ready case of the board: the draft, moved on by its presenter.
  const em = testApp.orm.em.fork();
  (await em.findOneOrFail(ClinicalCase, ids.northDraft)).status = 'ready-for-board';
  await em.flush();
  for (const caseId of [ids.northReady, ids.northDraft]) {
    const added = await presenter.post(`/api/meetings/${meetingId}/agenda`, { caseId });
    expect(added.status, JSON.stringify(added.body)).toBe(201);
  }
  const agenda = ((await member.get(`/api/meetings/${meetingId}`)).body as MeetingView).agenda;
  itemId = agenda[0].id;
  otherItemId = agenda[1].id;

  const presenterId = userId('presenter@emberline.test');
  const seriesId = await insertSeriesRow(testApp.orm, ids.northReady, presenterId);
  [planA, draftPlan, planB] = await insertPlans(ids.northReady, seriesId, [
    { name: 'Plan A', status: 'assessed' },
    { name: 'Plan C draft', status: 'draft' },
    { name: 'Plan B', status: 'set-aside' },
  ]);
  const foreignSeries = await insertSeriesRow(testApp.orm, ids.northDraft, presenterId);
  [foreignPlan] = await insertPlans(ids.northDraft, foreignSeries, [
    { name: 'Other case plan', status: 'assessed' },
  ]);
});

afterAll(async () => {
  await testApp?.close();
});

describe('the tally', () => {
  it('lists the assessed plans oldest first, then every treatment, all at zero', async () => {
    const response = await member.get(`/api/agenda-items/${itemId}/tally`);
    expect(response.status).toBe(200);
    const tally = response.body as TallyView;
    expect(tally.rows.map((row) => row.option)).toEqual([planA, planB, ...treatments]);
    expect(tally.rows.map((row) => row.label)).toEqual([
      'Plan A',
      'Plan B',
      ...treatments.map((treatment) => treatmentLabels[treatment]),
    ]);
    expect(tally.rows.every((row) => row.support + row.oppose + row.abstain === 0)).toBe(true);
    expect(tally).toMatchObject({ agendaItemId: itemId, voterCount: 0, isClosed: false, mine: [] });
    expect(tally.rows.some((row) => row.option === draftPlan)).toBe(false);
  });

  it('counts a retried vote once, a changed vote in its new place and a withdrawn one nowhere', async () => {
    const mark = room.emitted.length;
    // The member supports Plan A, and the request is sent three times (a retry after a lost
    // answer): one position, one audit entry, one broadcast.
    for (let attempt = 0; attempt < 3; attempt += 1) {
      const response = await vote(member, { option: planA, position: 'support' });
      expect(response.status, JSON.stringify(response.body)).toBe(200);
    }
    expect((await vote(presenter, { option: planA, position: 'support' })).status).toBe(200);
    expect((await vote(proceduralist, { option: planA, position: 'oppose' })).status).toBe(200);
    expect(
      (await vote(proceduralist, { option: 'ablation-mw', position: 'support', comment: 'Small' }))
        .status,
    ).toBe(200);
    // The proceduralist changes their mind on Plan A; the presenter withdraws.
    expect((await vote(proceduralist, { option: planA, position: 'support' })).status).toBe(200);
    const last = await vote(presenter, { option: planA, position: null });
    expect(last.status).toBe(200);
    // Withdrawing what is not there changes nothing.
    expect((await vote(presenter, { option: 'tace', position: null })).status).toBe(200);

    const tally = last.body as TallyView;
    expect(rowOf(tally, planA)).toEqual({ support: 2, oppose: 0, abstain: 0 });
    expect(rowOf(tally, 'ablation-mw')).toEqual({ support: 1, oppose: 0, abstain: 0 });
    expect(rowOf(tally, planB)).toEqual({ support: 0, oppose: 0, abstain: 0 });
    const total = tally.rows.reduce((sum, row) => sum + row.support + row.oppose + row.abstain, 0);
    expect(total).toBe(3);
    // The presenter withdrew their only position: two members have one standing.
    expect(tally.voterCount).toBe(2);
    expect(tally.mine).toEqual([]);

    const mine = (await proceduralist.get(`/api/agenda-items/${itemId}/tally`)).body as TallyView;
    expect(mine.mine?.map((entry) => [entry.option, entry.position, entry.comment])).toEqual([
      [planA, 'support', null],
      ['ablation-mw', 'support', 'Small'],
    ]);
    expect(mine.rows).toEqual(tally.rows);

    // Six changes: member's support, presenter's support, proceduralist's oppose, support of
    // ablation-mw, the change to support, the withdrawal. The retries and the empty withdrawal
    // are none.
    expect(await auditCount('vote.cast', itemId)).toBe(6);
    const broadcasts = room.since(mark, 'vote:tally');
    expect(broadcasts).toHaveLength(6);
    expect(broadcasts.every((emit) => emit.meetingId === meetingId)).toBe(true);
    const lastBroadcast = broadcasts[5].payload as TallyView;
    expect(lastBroadcast.mine).toBeUndefined();
    expect(lastBroadcast.rows).toEqual(tally.rows);
  });

  it('is the same tally the minutes read', async () => {
    const direct = await tallyOf(testApp.orm.em.fork(), itemId);
    const served = (await member.get(`/api/agenda-items/${itemId}/tally`)).body as TallyView;
    const { mine, ...withoutMine } = served;
    expect(mine?.map((entry) => entry.option)).toEqual([planA]);
    expect(direct).toEqual(withoutMine);
  });

  it('keeps a comment while the position stands and drops it when the position changes', async () => {
    let tally = (await vote(member, { option: 'tace', position: 'abstain', comment: 'Unsure' }))
      .body as TallyView;
    expect(tally.mine?.find((entry) => entry.option === 'tace')?.comment).toBe('Unsure');
    tally = (await vote(member, { option: 'tace', position: 'abstain' })).body as TallyView;
    expect(tally.mine?.find((entry) => entry.option === 'tace')?.comment).toBe('Unsure');
    tally = (await vote(member, { option: 'tace', position: 'oppose' })).body as TallyView;
    expect(tally.mine?.find((entry) => entry.option === 'tace')?.comment).toBeNull();
    expect(rowOf(tally, 'tace')).toEqual({ support: 0, oppose: 1, abstain: 0 });
    tally = (await vote(member, { option: 'tace', position: null })).body as TallyView;
    expect(rowOf(tally, 'tace')).toEqual({ support: 0, oppose: 0, abstain: 0 });
  });
});

describe('who votes', () => {
  it('refuses a nurse coordinator and an administrator (403) and lets the administrator read', async () => {
    const byCoordinator = await vote(coordinator, { option: planA, position: 'support' });
    expect(byCoordinator.status).toBe(403);
    expect((byCoordinator.body as ProblemDetails).detail).toMatch(/board members/);
    expect((await vote(admin, { option: planA, position: 'support' })).status).toBe(403);
    const read = await admin.get(`/api/agenda-items/${itemId}/tally`);
    expect(read.status).toBe(200);
    expect(rowOf(read.body as TallyView, planA).support).toBe(2);
    expect((read.body as TallyView).mine).toEqual([]);
  });

  it('hides the item from a member of another board (404), reading and voting', async () => {
    expect((await south.get(`/api/agenda-items/${itemId}/tally`)).status).toBe(404);
    expect((await vote(south, { option: 'tace', position: 'support' })).status).toBe(404);
    expect((await south.get(`/api/agenda-items/${itemId}/comments`)).status).toBe(404);
    expect((await member.get('/api/agenda-items/not-an-id/tally')).status).toBe(404);
  });

  it('records one attendance by vote per member not in the room, none for one in it', async () => {
    const em = testApp.orm.em.fork();
    const byVote = await em.find(Attendance, { meeting: meetingId, via: 'vote' });
    const memberId = userId('member@emberline.test');
    // Three members voted over the API with no socket in the room, the member five times: three
    // rows, one each.
    expect(byVote).toHaveLength(3);
    const memberRows = byVote.filter((row) => row.user.id === memberId);
    expect(memberRows).toHaveLength(1);
    expect(memberRows[0].specialty).toBe('diagnostic-radiology');
    expect(memberRows[0].leftAt?.getTime()).toBe(memberRows[0].joinedAt.getTime());

    // Another board member, who has not voted yet, connected to the room: no attendance by vote.
    const template = await em.findOneOrFail(
      User,
      { email: 'member@emberline.test' },
      { populate: ['passwordHash'] },
    );
    const added = new User('second.member@emberline.test', 'Dr Second Member (invented)');
    added.roles = ['board-member'];
    added.passwordHash = template.passwordHash;
    em.persist(added);
    em.persist(
      new BoardMembership(
        em.getReference(Board, ids.northBoard, { wrapped: true }),
        em.getReference(User, added.id, { wrapped: true }),
        'hepatobiliary-surgery',
      ),
    );
    await em.flush();
    const second = await signedIn('second.member@emberline.test');
    room.setInRoom(meetingId, added.id, true);
    const mark = room.emitted.length;
    expect((await vote(second, { option: planB, position: 'abstain' })).status).toBe(200);
    expect(await em.fork().count(Attendance, { meeting: meetingId, user: added.id })).toBe(0);
    expect(room.since(mark, 'presence')).toHaveLength(0);

    // Out of the room now: the next vote makes them attend by vote, and the room hears the new
    // presence with them in it.
    room.setInRoom(meetingId, added.id, false);
    expect((await vote(second, { option: planB, position: 'support' })).status).toBe(200);
    expect(
      await em.fork().count(Attendance, { meeting: meetingId, user: added.id, via: 'vote' }),
    ).toBe(1);
    const presence = room.since(mark, 'presence');
    expect(presence).toHaveLength(1);
    expect(presence[0].meetingId).toBe(meetingId);
    const view = presence[0].payload as PresenceView;
    expect(view.members.find((entry) => entry.userId === added.id)).toMatchObject({
      isInRoom: false,
      specialty: 'hepatobiliary-surgery',
    });
    // Withdrawn, so that the counts of the other tests stay as they were.
    expect((await vote(second, { option: planB, position: null })).status).toBe(200);
  });
});

describe('options', () => {
  it('refuses a plan that is not assessed, a plan of another case and an unknown plan id, naming option', async () => {
    for (const option of [draftPlan, foreignPlan, '7d7f0a56-7c1b-4e0c-9a5e-5b0c3f1e2a11']) {
      const response = await vote(member, { option, position: 'support' });
      expect(response.status).toBe(400);
      expect((response.body as ProblemDetails).errors?.map((error) => error.path)).toEqual([
        'option',
      ]);
    }
  });

  it('refuses a treatment that is not on the list and a position that is not one', async () => {
    const unknown = await vote(member, { option: 'homeopathy', position: 'support' });
    expect(unknown.status).toBe(400);
    expect((unknown.body as ProblemDetails).errors?.[0]?.path).toBe('option');
    const position = await vote(member, { option: 'tace', position: 'maybe' });
    expect(position.status).toBe(400);
    expect((position.body as ProblemDetails).errors?.[0]?.path).toBe('position');
    const tally = (await member.get(`/api/agenda-items/${itemId}/tally`)).body as TallyView;
    expect(rowOf(tally, planA)).toEqual({ support: 2, oppose: 0, abstain: 0 });
  });
});

describe('comments', () => {
  let first: CommentView;

  it('takes a comment from a clinical member and threads an answer under it', async () => {
    const mark = room.emitted.length;
    const posted = await member.post(`/api/agenda-items/${itemId}/comments`, {
      body: '  The lesion abuts the hepatic vein.  ',
    });
    expect(posted.status, JSON.stringify(posted.body)).toBe(201);
    first = posted.body as CommentView;
    expect(first).toMatchObject({
      agendaItemId: itemId,
      caseId: ids.northReady,
      parentId: null,
      body: 'The lesion abuts the hepatic vein.',
      isForMinutes: false,
      author: { id: userId('member@emberline.test') },
    });
    const answer = await presenter.post(`/api/agenda-items/${itemId}/comments`, {
      body: 'Heat sink considered in Plan B.',
      parentId: first.id,
    });
    expect(answer.status).toBe(201);
    expect((answer.body as CommentView).parentId).toBe(first.id);
    const pushed = room.since(mark, 'comment:posted');
    expect(pushed.map((emit) => (emit.payload as CommentView).id)).toEqual([
      first.id,
      (answer.body as CommentView).id,
    ]);
    expect(pushed.every((emit) => emit.meetingId === meetingId)).toBe(true);
    expect(await auditCount('comment.post', itemId)).toBe(2);
  });

  it('refuses an answer to a comment of another item, or to none, naming parentId', async () => {
    const elsewhere = await member.post(`/api/agenda-items/${otherItemId}/comments`, {
      body: 'On the other case.',
    });
    expect(elsewhere.status).toBe(201);
    for (const parentId of [
      (elsewhere.body as CommentView).id,
      '0f3c9b1e-2d4a-4c6b-8e1f-9a7b6c5d4e3f',
    ]) {
      const response = await member.post(`/api/agenda-items/${itemId}/comments`, {
        body: 'Crossed wires',
        parentId,
      });
      expect(response.status).toBe(400);
      expect((response.body as ProblemDetails).errors?.map((error) => error.path)).toEqual([
        'parentId',
      ]);
    }
  });

  it('refuses an empty comment, a coordinator and an administrator', async () => {
    const empty = await member.post(`/api/agenda-items/${itemId}/comments`, { body: '   ' });
    expect(empty.status).toBe(400);
    expect((empty.body as ProblemDetails).errors).toEqual([
      { path: 'body', message: 'Write something first' },
    ]);
    expect(
      (await coordinator.post(`/api/agenda-items/${itemId}/comments`, { body: 'Booked?' })).status,
    ).toBe(403);
    expect(
      (await admin.post(`/api/agenda-items/${itemId}/comments`, { body: 'Audit note' })).status,
    ).toBe(403);
  });

  it('lists an item’s comments oldest first, and a case’s comments across its items', async () => {
    const listed = (await coordinator.get(`/api/agenda-items/${itemId}/comments`))
      .body as CommentView[];
    expect(listed.map((comment) => [comment.body, comment.parentId])).toEqual([
      ['The lesion abuts the hepatic vein.', null],
      ['Heat sink considered in Plan B.', first.id],
    ]);
    const byCase = (await member.get(`/api/cases/${ids.northReady}/comments`))
      .body as CommentView[];
    expect(byCase.map((comment) => comment.id)).toEqual(listed.map((comment) => comment.id));
    // The case file's history follows the case's visibility: not for a coordinator before the
    // decision, nor for an administrator, nor for another board.
    expect((await coordinator.get(`/api/cases/${ids.northReady}/comments`)).status).toBe(404);
    expect((await admin.get(`/api/cases/${ids.northReady}/comments`)).status).toBe(404);
    expect((await south.get(`/api/cases/${ids.northReady}/comments`)).status).toBe(404);
  });

  it('lets only the chair mark a comment for the minutes', async () => {
    expect((await member.patch(`/api/comments/${first.id}`, { isForMinutes: true })).status).toBe(
      403,
    );
    expect((await south.patch(`/api/comments/${first.id}`, { isForMinutes: true })).status).toBe(
      404,
    );
    expect(
      (await proceduralist.patch(`/api/comments/${first.id}`, { isForMinutes: 'yes' })).status,
    ).toBe(400);
    const marked = await proceduralist.patch(`/api/comments/${first.id}`, { isForMinutes: true });
    expect(marked.status).toBe(200);
    expect((marked.body as CommentView).isForMinutes).toBe(true);
    // Marking again changes nothing and is not audited twice.
    expect(
      (await proceduralist.patch(`/api/comments/${first.id}`, { isForMinutes: true })).status,
    ).toBe(200);
    expect(await auditCount('comment.mark', first.id)).toBe(1);
    const listed = (await member.get(`/api/agenda-items/${itemId}/comments`)).body as CommentView[];
    expect(listed.find((comment) => comment.id === first.id)?.isForMinutes).toBe(true);
  });
});

describe('the case’s vote history', () => {
  it('lists the positions per agenda item with the meeting, by option order', async () => {
    const response = await member.get(`/api/cases/${ids.northReady}/votes`);
    expect(response.status).toBe(200);
    const history = response.body as AgendaItemVotes[];
    expect(history).toHaveLength(1);
    expect(history[0]).toMatchObject({ agendaItemId: itemId, meetingId, isClosed: false });
    expect(history[0].votes.map((entry) => [entry.option, entry.position, entry.voter.id])).toEqual(
      [
        [planA, 'support', userId('member@emberline.test')],
        [planA, 'support', userId('proceduralist@emberline.test')],
        ['ablation-mw', 'support', userId('proceduralist@emberline.test')],
      ],
    );
    expect((await admin.get(`/api/cases/${ids.northReady}/votes`)).status).toBe(404);
    expect((await south.get(`/api/cases/${ids.northReady}/votes`)).status).toBe(404);
  });
});

describe('closing', () => {
  let firstCommentId: string;

  beforeAll(async () => {
    const listed = (await member.get(`/api/agenda-items/${itemId}/comments`)).body as CommentView[];
    firstCommentId = listed[0].id;
  });

  it('refuses votes and comments on a closed item (409) and shows the tally closed', async () => {
    await setItemClosed(itemId, new Date());
    try {
      const refused = await vote(member, { option: planA, position: 'oppose' });
      expect(refused.status).toBe(409);
      expect((refused.body as ProblemDetails).detail).toMatch(/Voting has closed/);
      expect(
        (await member.post(`/api/agenda-items/${itemId}/comments`, { body: 'Late' })).status,
      ).toBe(409);
      const tally = (await member.get(`/api/agenda-items/${itemId}/tally`)).body as TallyView;
      expect(tally.isClosed).toBe(true);
      expect(rowOf(tally, planA)).toEqual({ support: 2, oppose: 0, abstain: 0 });
    } finally {
      await setItemClosed(itemId, null);
    }
  });

  it('refuses votes, comments and marks once the meeting has closed (409)', async () => {
    await setMeetingState(meetingId, 'closed');
    try {
      expect((await vote(member, { option: 'tace', position: 'support' })).status).toBe(409);
      expect(
        (await member.post(`/api/agenda-items/${itemId}/comments`, { body: 'Late' })).status,
      ).toBe(409);
      expect(
        (await proceduralist.patch(`/api/comments/${firstCommentId}`, { isForMinutes: false }))
          .status,
      ).toBe(409);
      expect(
        ((await member.get(`/api/agenda-items/${itemId}/tally`)).body as TallyView).isClosed,
      ).toBe(true);
    } finally {
      await setMeetingState(meetingId, 'scheduled');
    }
  });
});
