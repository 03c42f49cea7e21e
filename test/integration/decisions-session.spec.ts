/**
 * `decision:record` over the `/session` namespace against the real server: the same rules as
 * POST /api/cases/:id/decision, answered in the one acknowledgement shape, with quorum taken
 * from the members connected to the meeting's room, the single sign-on's age re-read from the
 * session store (not the handshake's copy), and the decision pushed to the room.
 *
 * Outside references (from memory): RFC 9457 §3 problem details in the acknowledgement;
 * OWASP ASVS 4.0.3 V3.7.1, re-authentication before a sensitive transaction. Product rules:
 * server/src/modules/decisions/README.md.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  AgendaChangedEvent,
  BoardMemberView,
  DecisionRecordedEvent,
  DecisionView,
  MeetingView,
  ProblemDetails,
  SessionAck,
} from '@emberline/shared';
import { resetToDemo, demoPassword, type DemoIds } from '../support/demo';
import {
  ask,
  connected,
  nextEvent,
  startLiveServer,
  type LiveServer,
  type SessionClientSocket,
} from '../support/live-server';
import type { ApiClient } from '../support/test-app';
import { boardMembers, meetingWithAgenda } from './decision-fixtures';

let live: LiveServer;
let ids: DemoIds;
let meeting: MeetingView;
let proceduralist: ApiClient;
let memberOf: (email: string) => BoardMemberView;
let chairSocket: SessionClientSocket;
let memberSocket: SessionClientSocket;

function problemOf(ack: SessionAck<unknown>): ProblemDetails {
  if (ack.ok) throw new Error(`expected a refusal, got ${JSON.stringify(ack.data)}`);
  return ack.problem;
}

const record = (socket: SessionClientSocket, decision: Record<string, unknown>) =>
  ask<DecisionView>(socket, 'decision:record', {
    caseId: ids.northReady,
    decision: {
      outcome: 'surveillance',
      rationale: 'Sub-centimetre lesion: imaging in three months, then the board again.',
      password: demoPassword,
      ...decision,
    },
  });

/** Rewrites the proceduralist's stored sessions (what a sign-in writes), see decisions.spec. */
async function setSessions(method: 'local' | 'saml', signedInAt: number): Promise<void> {
  await live.testApp.orm.em
    .getConnection()
    .execute(
      `update http_session set sess = (sess::jsonb || ?::jsonb)::json where sess ->> 'userId' = ?`,
      [
        JSON.stringify({ signInMethod: method, signedInAt }),
        memberOf('proceduralist@emberline.test').userId,
      ],
    );
}

async function joinedSocket(client: ApiClient): Promise<SessionClientSocket> {
  const socket = live.sessionSocket(client);
  await connected(socket);
  const joined = await ask(socket, 'session:join', { meetingId: meeting.id });
  expect(joined.ok, JSON.stringify(joined)).toBe(true);
  return socket;
}

beforeAll(async () => {
  live = await startLiveServer();
  ids = await resetToDemo(live.testApp.orm);
  const presenter = await live.signIn('presenter@emberline.test');
  const member = await live.signIn('member@emberline.test');
  const admin = await live.signIn('admin@emberline.test');
  proceduralist = await live.signIn('proceduralist@emberline.test');
  memberOf = await boardMembers(member, ids.northBoard);
  const quorum = await admin.put(`/api/admin/boards/${ids.northBoard}/quorum`, {
    requiredSpecialties: ['diagnostic-radiology', 'interventional-radiology'],
  });
  expect(quorum.status).toBe(200);
  meeting = await meetingWithAgenda(
    presenter,
    ids.northBoard,
    memberOf('proceduralist@emberline.test').userId,
    [ids.northReady],
  );
  chairSocket = await joinedSocket(proceduralist);
  memberSocket = await joinedSocket(member);
});

afterAll(async () => {
  await live?.close();
});

describe('decision:record', () => {
  it('refuses a board member in the acknowledgement (403), as the HTTP route does', async () => {
    const problem = problemOf(await record(memberSocket, {}));
    expect(problem.status).toBe(403);
    expect(problem.detail).toBe(
      'Only a proceduralist of the case’s board records the board’s decision.',
    );
  });

  it('refuses a wrong password (401) with the problem type the client asks again on', async () => {
    const problem = problemOf(await record(chairSocket, { password: 'not the password' }));
    expect(problem).toMatchObject({
      status: 401,
      type: 'urn:emberline:problem:password-required',
    });
  });

  it('reads the single sign-on’s age from the session store, not from the handshake', async () => {
    // Signed on a minute ago when the socket connects …
    await setSessions('saml', Date.now() - 60_000);
    const samlSocket = live.sessionSocket(proceduralist);
    try {
      await connected(samlSocket);
      // … but the store now says six minutes: the signature needs a fresh sign-on.
      await setSessions('saml', Date.now() - 6 * 60_000);
      const problem = problemOf(await record(samlSocket, { password: undefined }));
      expect(problem).toMatchObject({
        status: 401,
        type: 'urn:emberline:problem:fresh-sso-required',
      });
    } finally {
      samlSocket.close();
      await setSessions('local', Date.now());
    }
  });

  it('signs with quorum from the members in the room, acknowledges the decision and tells the room', async () => {
    const recorded = nextEvent<DecisionRecordedEvent>(memberSocket, 'decision:recorded');
    const changed = nextEvent<AgendaChangedEvent>(
      memberSocket,
      'agenda:changed',
      (event) => event.reason === 'decision',
    );
    const ack = await record(chairSocket, {});
    if (!ack.ok) throw new Error(`refused: ${JSON.stringify(ack.problem)}`);
    const decision = ack.data;
    expect(decision).toMatchObject({
      caseId: ids.northReady,
      meetingId: meeting.id,
      agendaItemId: meeting.agenda[0].id,
      outcome: 'surveillance',
      selectedPlan: null,
      signInMethod: 'local',
      quorumOverrideReason: null,
    });
    // Both radiologists are connected: quorum met without anyone voting.
    expect(decision.quorum).toMatchObject({ isMet: true, missing: [], presentCount: 2 });
    expect(await recorded).toEqual({
      meetingId: meeting.id,
      agendaItemId: meeting.agenda[0].id,
      decision,
    });
    expect(await changed).toEqual({ meetingId: meeting.id, reason: 'decision' });
    const again = problemOf(await record(chairSocket, {}));
    expect(again.status).toBe(409);
  });
});
