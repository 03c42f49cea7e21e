/**
 * The live board session over Socket.IO against the real server and database: who may join,
 * presence and attendance, quorum in words, the lead's shared view and its hand-over, the one
 * acknowledgement shape, Origin and sign-out, deactivation and lost membership, and missed events
 * after a reconnect. Rules of the product (DEVELOPERS.md, "The board session").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  AgendaChangedEvent,
  BoardMemberView,
  MeetingView,
  PresenceView,
  ProblemDetails,
  SessionAck,
  SessionSnapshot,
  ViewState,
  ViewStateEvent,
} from '@emberline/shared';
import { io as connectSocket } from 'socket.io-client';
import { Attendance } from '../../server/src/modules/meetings/attendance.entity';
import { Meeting } from '../../server/src/modules/meetings/meeting.entity';
import { resetToDemo, type DemoIds } from '../support/demo';
import {
  ask,
  connected,
  nextEvent,
  sessionCookieOf,
  startLiveServer,
  type LiveServer,
  type SessionClientSocket,
} from '../support/live-server';
import type { ApiClient } from '../support/test-app';

let live: LiveServer;
let ids: DemoIds;
let members: BoardMemberView[];
let meeting: MeetingView;
let presenter: ApiClient;
let proceduralist: ApiClient;
let member: ApiClient;
let admin: ApiClient;

const idOf = (email: string) => {
  const found = members.find((entry) => entry.email === email);
  if (!found) throw new Error(`${email} is not a member`);
  return found.userId;
};

function problemOf(ack: SessionAck<unknown>): ProblemDetails {
  if (ack.ok) throw new Error(`expected a refusal, got ${JSON.stringify(ack.data)}`);
  return ack.problem;
}
function dataOf<T>(ack: SessionAck<T>): T {
  if (!ack.ok) throw new Error(`refused: ${JSON.stringify(ack.problem)}`);
  return ack.data;
}

async function joined(
  client: ApiClient,
): Promise<{ socket: SessionClientSocket; snapshot: SessionSnapshot }> {
  const socket = live.sessionSocket(client);
  await connected(socket);
  const snapshot = dataOf(
    await ask<SessionSnapshot>(socket, 'session:join', { meetingId: meeting.id }),
  );
  return { socket, snapshot };
}

const view = (axial: number): ViewState => ({
  agendaItemId: meeting.agenda[0].id,
  seriesId: null,
  slice: { axial, coronal: 10, sagittal: -5 },
  window: { width: 400, level: 50 },
  camera: null,
});

beforeAll(async () => {
  live = await startLiveServer();
  ids = await resetToDemo(live.testApp.orm);
  presenter = await live.signIn('presenter@emberline.test');
  proceduralist = await live.signIn('proceduralist@emberline.test');
  member = await live.signIn('member@emberline.test');
  admin = await live.signIn('admin@emberline.test');
  members = (await member.get(`/api/boards/${ids.northBoard}/members`)).body as BoardMemberView[];
  expect(
    (
      await admin.put(`/api/admin/boards/${ids.northBoard}/quorum`, {
        requiredSpecialties: ['hepatology', 'interventional-radiology'],
      })
    ).status,
  ).toBe(200);
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
});

afterAll(async () => {
  await live?.close();
});

describe('the handshake', () => {
  it('refuses a socket from another origin, and one without a session', async () => {
    const foreign = connectSocket(`${live.url}/session`, {
      transports: ['websocket'],
      extraHeaders: { Cookie: sessionCookieOf(member), Origin: 'http://elsewhere.example' },
      reconnection: false,
    });
    await expect(connected(foreign as SessionClientSocket)).rejects.toThrow();
    foreign.close();
    const anonymous = connectSocket(`${live.url}/session`, {
      transports: ['websocket'],
      extraHeaders: { Cookie: 'emberline.sid=nothing', Origin: live.testApp.config.publicUrl },
      reconnection: false,
    });
    await expect(connected(anonymous as SessionClientSocket)).rejects.toThrow(/Sign in/);
    anonymous.close();
  });
});

describe('joining', () => {
  it('refuses a member of another board as if the meeting did not exist, and an administrator', async () => {
    const south = await live.signIn('south@emberline.test');
    const socket = live.sessionSocket(south);
    await connected(socket);
    expect(problemOf(await ask(socket, 'session:join', { meetingId: meeting.id })).status).toBe(
      404,
    );
    const adminSocket = live.sessionSocket(admin);
    await connected(adminSocket);
    expect(
      problemOf(await ask(adminSocket, 'session:join', { meetingId: meeting.id })).status,
    ).toBe(403);
  });

  it('answers a malformed payload with the same 400 problem as the API', async () => {
    const socket = live.sessionSocket(member);
    await connected(socket);
    const problem = problemOf(await ask(socket, 'session:join', { meetingId: 'not-a-uuid' }));
    expect(problem.status).toBe(400);
    expect(problem.title).toBe('Invalid request');
    expect(problem.errors?.[0].path).toBe('meetingId');
    socket.close();
  });

  it('shows who is present with their specialty, and quorum with what is missing', async () => {
    const { socket, snapshot } = await joined(member);
    expect(snapshot.presence.members.map((entry) => entry.specialty)).toEqual([
      'diagnostic-radiology',
    ]);
    expect(snapshot.presence.quorum.isMet).toBe(false);
    expect(snapshot.presence.quorum.missing).toEqual(['hepatology', 'interventional-radiology']);
    expect(snapshot.presence.quorum.explanation).toMatch(/Hepatology, Interventional radiology/);
    expect(snapshot.permissions).toMatchObject({
      canVote: true,
      canRecordDecision: false,
      isChair: false,
    });
    // The chair opens the session on joining; the presenter of the first item leads.
    const opened = nextEvent<AgendaChangedEvent>(
      socket,
      'agenda:changed',
      (event) => event.reason === 'opened',
    );
    const chair = await joined(proceduralist);
    await opened;
    expect(chair.snapshot.permissions).toMatchObject({
      isChair: true,
      canRecordDecision: true,
      canClose: true,
    });
    const stored = await live.testApp.orm.em.fork().findOneOrFail(Meeting, meeting.id);
    expect(stored.state).toBe('in-session');
    expect(stored.lead?.id).toBe(idOf('presenter@emberline.test'));
    const quorate = nextEvent<PresenceView>(socket, 'presence', (event) => event.quorum.isMet);
    await joined(presenter);
    const presence = await quorate;
    expect(presence.members).toHaveLength(3);
    expect(presence.quorum.explanation).toMatch(/^Met/);
  });

  it('records attendance: one open visit per member, closed when their last socket leaves', async () => {
    const { socket } = await joined(member);
    const em = live.testApp.orm.em.fork();
    const memberId = idOf('member@emberline.test');
    expect(await em.count(Attendance, { meeting: meeting.id, user: memberId, leftAt: null })).toBe(
      1,
    );
    // Every socket of the member now leaves the room.
    live.room.disconnectUser(memberId);
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect(socket.connected).toBe(false);
    const rows = await em.fork().find(Attendance, { meeting: meeting.id, user: memberId });
    expect(rows.length).toBeGreaterThanOrEqual(1);
    expect(rows.every((row) => row.leftAt !== null && row.leftAt >= row.joinedAt)).toBe(true);
  });
});

describe('the shared view', () => {
  it('follows the lead on every follower, refuses anyone else, and moves with the hand-over', async () => {
    const lead = await joined(presenter);
    const follower = await joined(member);
    expect(lead.snapshot.permissions.isLead).toBe(true);
    const refused = problemOf(
      await ask(follower.socket, 'view:update', { meetingId: meeting.id, state: view(1) }),
    );
    expect(refused.status).toBe(403);

    const followed = nextEvent<ViewStateEvent>(
      follower.socket,
      'view:state',
      (event) => event.state.slice?.axial === 42,
    );
    const sent = dataOf(
      await ask<{ sequence: number }>(lead.socket, 'view:update', {
        meetingId: meeting.id,
        state: view(42),
      }),
    );
    const event = await followed;
    expect(event.sequence).toBe(sent.sequence);
    expect(event.leadUserId).toBe(idOf('presenter@emberline.test'));

    // A burst: the followers get the latest state, never a backlog of every step.
    const received: number[] = [];
    follower.socket.on('view:state', (state) => received.push(state.state.slice?.axial ?? NaN));
    for (let axial = 100; axial < 140; axial += 1) {
      lead.socket.emit(
        'view:update',
        { meetingId: meeting.id, state: view(axial) },
        () => undefined,
      );
    }
    await new Promise((resolve) => setTimeout(resolve, 600));
    expect(received.at(-1)).toBe(139);
    expect(received.length).toBeLessThan(40);

    const handed = dataOf(
      await ask<PresenceView>(lead.socket, 'view:hand-over', {
        meetingId: meeting.id,
        userId: idOf('member@emberline.test'),
      }),
    );
    expect(handed.leadUserId).toBe(idOf('member@emberline.test'));
    expect(
      problemOf(await ask(lead.socket, 'view:update', { meetingId: meeting.id, state: view(7) }))
        .status,
    ).toBe(403);
    const fromNewLead = nextEvent<ViewStateEvent>(
      lead.socket,
      'view:state',
      (e) => e.state.slice?.axial === 7,
    );
    dataOf(await ask(follower.socket, 'view:update', { meetingId: meeting.id, state: view(7) }));
    expect((await fromNewLead).sequence).toBeGreaterThan(event.sequence);
    // A late joiner starts from the latest view.
    const late = await joined(proceduralist);
    expect(late.snapshot.view.state.slice?.axial).toBe(7);
    // Only a member in the room takes the lead.
    const south = members.find((entry) => entry.email === 'coordinator@emberline.test');
    expect(
      problemOf(
        await ask(follower.socket, 'view:hand-over', {
          meetingId: meeting.id,
          userId: south?.userId,
        }),
      ).status,
    ).toBe(400);
  });
});

describe('losing access closes the sockets at once', () => {
  it('on sign-out', async () => {
    const client = await live.signIn('member@emberline.test');
    const { socket } = await joined(client);
    const closed = new Promise<string>((resolve) => socket.once('disconnect', resolve));
    expect((await client.post('/api/auth/logout')).status).toBe(204);
    expect(await closed).toBe('io server disconnect');
  });

  it('on deactivation, and on losing the membership', async () => {
    const client = await live.signIn('member@emberline.test');
    const first = await joined(client);
    const memberId = idOf('member@emberline.test');
    const removed = new Promise<string>((resolve) => first.socket.once('disconnect', resolve));
    expect(
      (await admin.delete(`/api/admin/boards/${ids.northBoard}/members/${memberId}`)).status,
    ).toBe(204);
    expect(await removed).toBe('io server disconnect');
    // Without the membership the meeting is out of reach.
    const again = live.sessionSocket(client);
    await connected(again);
    expect(problemOf(await ask(again, 'session:join', { meetingId: meeting.id })).status).toBe(404);
    const deactivated = new Promise<string>((resolve) => again.once('disconnect', resolve));
    expect((await admin.patch(`/api/admin/users/${memberId}`, { isActive: false })).status).toBe(
      200,
    );
    expect(await deactivated).toBe('io server disconnect');
    // Put things back for the tests that follow.
    expect((await admin.patch(`/api/admin/users/${memberId}`, { isActive: true })).status).toBe(
      200,
    );
    expect(
      (
        await admin.post(`/api/admin/boards/${ids.northBoard}/members`, {
          userId: memberId,
          specialty: 'diagnostic-radiology',
        })
      ).status,
    ).toBe(204);
  });
});

describe('a dropped connection', () => {
  it('gets what it missed when it comes back (connection-state recovery)', async () => {
    const socket = live.sessionSocket(member, { reconnection: true, reconnectionDelay: 300 });
    await connected(socket);
    dataOf(await ask(socket, 'session:join', { meetingId: meeting.id }));
    const received: PresenceView[] = [];
    socket.on('presence', (event) => received.push(event));
    // The transport drops; while it is down, someone joins (a presence event is broadcast).
    socket.io.engine.close();
    await new Promise((resolve) => setTimeout(resolve, 50));
    expect(socket.connected).toBe(false);
    const extra = live.sessionSocket(presenter);
    await connected(extra);
    const joinedWhileAway = dataOf(
      await ask<SessionSnapshot>(extra, 'session:join', { meetingId: meeting.id }),
    );
    expect(received).toHaveLength(0);
    await new Promise<void>((resolve) => socket.once('connect', () => resolve()));
    expect(socket.recovered).toBe(true);
    await new Promise((resolve) => setTimeout(resolve, 200));
    // The missed broadcast arrives after the reconnect, exactly as it was sent.
    expect(received.map((event) => event.members.length)).toContain(
      joinedWhileAway.presence.members.length,
    );
    socket.close();
    extra.close();
  });

  it('resyncs from the database when recovery is not possible: a new socket starts from the stored view', async () => {
    const { snapshot } = await joined(member);
    const stored = await live.testApp.orm.em.fork().findOneOrFail(Meeting, meeting.id);
    expect(snapshot.view.sequence).toBeGreaterThanOrEqual(stored.viewSequence);
    expect(snapshot.view.state.slice?.axial).toBe(7);
  });
});
