/**
 * Every role and an anonymous client against every `/session` client event, one expected status
 * a cell: the acknowledgement `{ ok: true }` counts as 200 (an acknowledgement carries no status
 * of its own), a refusal as its problem's `status`. The rules are those of the HTTP API
 * (DEVELOPERS.md, "Roles"; the READMEs of votes, annotations, decisions and meetings; OWASP ASVS
 * 5.0 §8 access control): a meeting or case out of reach 404, a forbidden action on a visible one
 * 403; administrators see a meeting but do not join it, lead, vote, comment or annotate; nurse
 * coordinators join but do not vote, comment or annotate; only the lead (or the chair) hands the
 * lead over; only a proceduralist signs. A socket without a session never connects: its handshake
 * is refused with "Sign in first.".
 *
 * Each role has a fresh copy of the demo and a meeting of the North board whose chair (the
 * proceduralist) and lead (the presenter of its one item, NLB-2026-014) are in the room on sockets
 * of their own; the role's socket sends the events in order, and the decision comes last.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { io as connectSocket } from 'socket.io-client';
import type { MeetingView, SessionAck, ViewState } from '@emberline/shared';
import { Annotation } from '../../server/src/modules/annotations/annotation.entity';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { User } from '../../server/src/modules/users/user.entity';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import {
  ask,
  connected,
  startLiveServer,
  type LiveServer,
  type SessionClientSocket,
} from '../support/live-server';
import { meetingWithAgenda } from './decision-fixtures';
import { insertSeriesRow } from './plan-fixtures';

const who = [
  'anonymous',
  'admin',
  'presenter',
  'member',
  'proceduralist',
  'coordinator',
  'south',
] as const;
type Who = (typeof who)[number];

/** The anonymous client's every cell: no session, so the handshake itself is refused. */
const refused = 'handshake refused';
type Expected = number | typeof refused;

interface Context {
  ids: DemoIds;
  meeting: MeetingView;
  presenterUserId: string;
  seriesId: string;
  /** The board member's annotation on NLB-2026-014, made before the meeting. */
  annotationId: string;
}

interface Cell {
  event: Parameters<typeof ask>[1];
  payload: (context: Context) => unknown;
  expected: Record<Who, Expected>;
}

//                     anonymous admin presenter member procedur. coordin. south
const row = (
  a: Expected,
  ad: number,
  p: number,
  m: number,
  pr: number,
  c: number,
  s: number,
): Record<Who, Expected> => ({
  anonymous: a,
  admin: ad,
  presenter: p,
  member: m,
  proceduralist: pr,
  coordinator: c,
  south: s,
});

const state: ViewState = {
  agendaItemId: null,
  seriesId: null,
  slice: { axial: 12, coronal: -4, sagittal: 30 },
  window: { width: 400, level: 50 },
  camera: null,
};

const cells: Cell[] = [
  {
    event: 'session:join',
    payload: (x) => ({ meetingId: x.meeting.id }),
    expected: row(refused, 403, 200, 200, 200, 200, 404),
  },
  {
    // Only the lead moves the shared view; the chair too asks for the lead first.
    event: 'view:update',
    payload: (x) => ({ meetingId: x.meeting.id, state }),
    expected: row(refused, 403, 200, 403, 403, 403, 404),
  },
  {
    // To the presenter, who leads already: the lead stays where the next cells expect it.
    event: 'view:hand-over',
    payload: (x) => ({ meetingId: x.meeting.id, userId: x.presenterUserId }),
    expected: row(refused, 403, 200, 403, 200, 403, 404),
  },
  {
    // The case is out of reach of an administrator and, undecided, of the coordinator.
    event: 'annotation:create',
    payload: (x) => ({
      caseId: x.ids.northReady,
      annotation: { seriesId: x.seriesId, kind: 'point', points: [[-42, 10, 5]] },
    }),
    expected: row(refused, 404, 200, 200, 200, 404, 404),
  },
  {
    // The author and the chair of the meeting discussing the case.
    event: 'annotation:update',
    payload: (x) => ({ id: x.annotationId, changes: { points: [[-40, 12, 5]] } }),
    expected: row(refused, 404, 403, 200, 200, 404, 404),
  },
  {
    event: 'comment:post',
    payload: (x) => ({
      agendaItemId: x.meeting.agenda[0].id,
      comment: { body: 'The segment VIII lesion abuts the right hepatic vein.' },
    }),
    expected: row(refused, 403, 200, 200, 200, 403, 404),
  },
  {
    event: 'vote:cast',
    payload: (x) => ({
      agendaItemId: x.meeting.agenda[0].id,
      vote: { option: 'tace', position: 'support' },
    }),
    expected: row(refused, 403, 200, 200, 200, 403, 404),
  },
  {
    event: 'annotation:delete',
    payload: (x) => ({ id: x.annotationId }),
    expected: row(refused, 404, 403, 200, 200, 404, 404),
  },
  {
    // Leaving is for those who may be in the room: anyone else hears what joining told them.
    event: 'session:leave',
    payload: (x) => ({ meetingId: x.meeting.id }),
    expected: row(refused, 403, 200, 200, 200, 200, 404),
  },
  {
    // The chair signs; with quorum the reason is not needed, without it the chair gives it.
    event: 'decision:record',
    payload: (x) => ({
      caseId: x.ids.northReady,
      decision: {
        outcome: 'tace',
        rationale: 'Signed in the matrix.',
        password: demoPassword,
        quorumOverrideReason: 'The matrix checks who signs, not quorum.',
      },
    }),
    expected: row(refused, 404, 403, 403, 200, 403, 404),
  },
];

const emails: Record<Exclude<Who, 'anonymous'>, string> = {
  admin: 'admin@emberline.test',
  presenter: 'presenter@emberline.test',
  member: 'member@emberline.test',
  proceduralist: 'proceduralist@emberline.test',
  coordinator: 'coordinator@emberline.test',
  south: 'south@emberline.test',
};

function statusOf(ack: SessionAck<unknown>): number {
  return ack.ok ? 200 : ack.problem.status;
}

let live: LiveServer;
beforeAll(async () => {
  live = await startLiveServer();
});
afterAll(async () => {
  await live?.close();
});

describe.each(who)('role × session event matrix: %s', (role) => {
  let context: Context;
  let socket: SessionClientSocket | null = null;
  const inRoom: SessionClientSocket[] = [];

  beforeAll(async () => {
    const orm = live.testApp.orm;
    const ids = await resetToDemo(orm);
    const em = orm.em.fork();
    const userId = async (email: string) => (await em.findOneOrFail(User, { email })).id;
    const presenterUserId = await userId(emails.presenter);
    const presenter = await live.signIn(emails.presenter);
    const chair = await live.signIn(emails.proceduralist);
    const meeting = await meetingWithAgenda(
      presenter,
      ids.northBoard,
      await userId(emails.proceduralist),
      [ids.northReady],
    );
    const seriesId = await insertSeriesRow(orm, ids.northReady, presenterUserId);
    const annotation = new Annotation({
      clinicalCase: em.getReference(ClinicalCase, ids.northReady, { wrapped: true }),
      series: em.getReference(ImageSeries, seriesId, { wrapped: true }),
      author: em.getReference(User, await userId(emails.member), { wrapped: true }),
      kind: 'point',
      points: [[-30, 8, 4]],
    });
    await em.persist(annotation).flush();
    // The chair opens the session on joining; the presenter of the first item leads.
    for (const client of [chair, presenter]) {
      const member = live.sessionSocket(client);
      await connected(member);
      const joined = await ask(member, 'session:join', { meetingId: meeting.id });
      expect(joined.ok, JSON.stringify(joined)).toBe(true);
      inRoom.push(member);
    }
    context = { ids, meeting, presenterUserId, seriesId, annotationId: annotation.id };
    if (role !== 'anonymous') {
      socket = live.sessionSocket(await live.signIn(emails[role]));
      await connected(socket);
    }
  });

  afterAll(async () => {
    // Out of the room before the next role empties the database under it.
    for (const member of inRoom) {
      await ask(member, 'session:leave', { meetingId: context.meeting.id });
      member.close();
    }
    socket?.close();
  });

  it.each(cells.map((cell) => [cell.event, cell] as const))('%s', async (_event, cell) => {
    const expected = cell.expected[role];
    if (socket === null || expected === refused) {
      expect(expected).toBe(refused);
      const anonymous = connectSocket(`${live.url}/session`, {
        path: '/socket.io',
        transports: ['websocket'],
        extraHeaders: { Origin: live.testApp.config.publicUrl },
        reconnection: false,
      }) as SessionClientSocket;
      try {
        await expect(connected(anonymous)).rejects.toThrow(/^Sign in first\.$/);
      } finally {
        anonymous.close();
      }
      return;
    }
    const ack = await ask(socket, cell.event, cell.payload(context));
    expect(statusOf(ack), JSON.stringify(ack)).toBe(expected);
  });
});
