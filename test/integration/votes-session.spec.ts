/**
 * Votes, comments and annotations over the `/session` namespace against the real server: the
 * same rules as the HTTP routes, answered in the one acknowledgement shape, and pushed to the
 * other members in the meeting's room. A member voting from the room attends by being there, not
 * by vote.
 *
 * Outside references (from memory): RFC 9457 §3 problem details in the acknowledgement; RFC 9110
 * §15.5.1 400 and §15.5.4 403 as their status; DICOM PS3.3 §C.18.9 (a POINT is one point).
 * Product rules (DEVELOPERS.md, "Roles"): nurse coordinators do not vote.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  AnnotationDeletedEvent,
  AnnotationView,
  BoardMemberView,
  CommentView,
  MeetingView,
  ProblemDetails,
  SessionAck,
  TallyView,
} from '@emberline/shared';
import { Attendance } from '../../server/src/modules/meetings/attendance.entity';
import { resetToDemo, type DemoIds } from '../support/demo';
import {
  ask,
  connected,
  nextEvent,
  startLiveServer,
  type LiveServer,
  type SessionClientSocket,
} from '../support/live-server';
import type { ApiClient } from '../support/test-app';
import { insertSeriesRow } from './plan-fixtures';

let live: LiveServer;
let ids: DemoIds;
let meeting: MeetingView;
let itemId: string;
let seriesId: string;
let memberId: string;
/** Both joined to the meeting: the chair (the proceduralist) and a board member. */
let chairSocket: SessionClientSocket;
let memberSocket: SessionClientSocket;
let coordinator: ApiClient;

function dataOf<T>(ack: SessionAck<T>): T {
  if (!ack.ok) throw new Error(`refused: ${JSON.stringify(ack.problem)}`);
  return ack.data;
}
function problemOf(ack: SessionAck<unknown>): ProblemDetails {
  if (ack.ok) throw new Error(`expected a refusal, got ${JSON.stringify(ack.data)}`);
  return ack.problem;
}

async function joinedSocket(client: ApiClient): Promise<SessionClientSocket> {
  const socket = live.sessionSocket(client);
  await connected(socket);
  dataOf(await ask(socket, 'session:join', { meetingId: meeting.id }));
  return socket;
}

beforeAll(async () => {
  live = await startLiveServer();
  ids = await resetToDemo(live.testApp.orm);
  const presenter = await live.signIn('presenter@emberline.test');
  const proceduralist = await live.signIn('proceduralist@emberline.test');
  const member = await live.signIn('member@emberline.test');
  coordinator = await live.signIn('coordinator@emberline.test');
  const members = (await member.get(`/api/boards/${ids.northBoard}/members`))
    .body as BoardMemberView[];
  const idOf = (email: string) => members.find((entry) => entry.email === email)?.userId ?? '';
  memberId = idOf('member@emberline.test');
  const scheduled = await presenter.post(`/api/boards/${ids.northBoard}/meetings`, {
    startsAt: new Date(Date.now() + 3_600_000).toISOString(),
    durationMin: 60,
    chairId: idOf('proceduralist@emberline.test'),
  });
  expect(scheduled.status).toBe(201);
  const added = await presenter.post(`/api/meetings/${(scheduled.body as MeetingView).id}/agenda`, {
    caseId: ids.northReady,
  });
  expect(added.status).toBe(201);
  meeting = added.body as MeetingView;
  itemId = meeting.agenda[0].id;
  seriesId = await insertSeriesRow(
    live.testApp.orm,
    ids.northReady,
    idOf('presenter@emberline.test'),
  );
  // The chair's arrival opens the session.
  chairSocket = await joinedSocket(proceduralist);
  memberSocket = await joinedSocket(member);
});

afterAll(async () => {
  await live?.close();
});

describe('vote:cast', () => {
  it('answers the voter with their positions and pushes the tally, without them, to the room', async () => {
    const pushed = nextEvent<TallyView>(chairSocket, 'vote:tally');
    const tally = dataOf(
      await ask<TallyView>(memberSocket, 'vote:cast', {
        agendaItemId: itemId,
        vote: { option: 'ablation-mw', position: 'support' },
      }),
    );
    expect(tally.mine?.map((entry) => [entry.option, entry.position])).toEqual([
      ['ablation-mw', 'support'],
    ]);
    const seen = await pushed;
    expect(seen.mine).toBeUndefined();
    expect(seen.rows.find((row) => row.option === 'ablation-mw')?.support).toBe(1);
    expect(seen.voterCount).toBe(1);
    // Voting from the room is attending in it: no attendance by vote.
    const em = live.testApp.orm.em.fork();
    expect(await em.count(Attendance, { meeting: meeting.id, user: memberId, via: 'vote' })).toBe(
      0,
    );
  });

  it('refuses a nurse coordinator (403) and a bad option (400, naming it)', async () => {
    const socket = live.sessionSocket(coordinator);
    await connected(socket);
    const refused = problemOf(
      await ask(socket, 'vote:cast', {
        agendaItemId: itemId,
        vote: { option: 'tace', position: 'support' },
      }),
    );
    expect(refused.status).toBe(403);
    const bad = problemOf(
      await ask(memberSocket, 'vote:cast', {
        agendaItemId: itemId,
        vote: { option: 'homeopathy', position: 'support' },
      }),
    );
    expect(bad.status).toBe(400);
    expect(bad.errors?.map((error) => error.path)).toEqual(['vote.option']);
  });
});

describe('comment:post', () => {
  it('answers with the comment and pushes it to the room', async () => {
    const pushed = nextEvent<CommentView>(chairSocket, 'comment:posted');
    const comment = dataOf(
      await ask<CommentView>(memberSocket, 'comment:post', {
        agendaItemId: itemId,
        comment: { body: 'Favour microwave: 18 mm, away from vessels.' },
      }),
    );
    expect(comment).toMatchObject({ agendaItemId: itemId, caseId: ids.northReady });
    expect((await pushed).id).toBe(comment.id);
  });
});

describe('annotation events', () => {
  it('creates, refuses another member’s change, and deletes, telling the room each time', async () => {
    const created = nextEvent<AnnotationView>(chairSocket, 'annotation:created');
    const annotation = dataOf(
      await ask<AnnotationView>(memberSocket, 'annotation:create', {
        caseId: ids.northReady,
        annotation: { seriesId, kind: 'point', points: [[10, -20, 30]] },
      }),
    );
    // The session is open: the annotation belongs to it.
    expect(annotation).toMatchObject({ meetingId: meeting.id, canEdit: true });
    expect((await created).id).toBe(annotation.id);

    const presenterSocket = live.sessionSocket(await live.signIn('presenter@emberline.test'));
    await connected(presenterSocket);
    const refused = problemOf(
      await ask(presenterSocket, 'annotation:update', {
        id: annotation.id,
        changes: { points: [[0, 0, 0]] },
      }),
    );
    expect(refused.status).toBe(403);

    const deleted = nextEvent<AnnotationDeletedEvent>(chairSocket, 'annotation:deleted');
    expect(dataOf(await ask(memberSocket, 'annotation:delete', { id: annotation.id }))).toBeNull();
    expect(await deleted).toEqual({ id: annotation.id, caseId: ids.northReady });
  });
});
