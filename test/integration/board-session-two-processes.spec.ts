/**
 * The live board session served by two server processes that share its rooms through the
 * Postgres adapter (`SOCKET_ADAPTER=postgres`): each process is `server/src/main.ts` as it runs in
 * production, on its own loopback port and public address, against the run's database. A member
 * on one process must see, hear and count what happens on the other: presence (asked of every
 * process with `fetchSockets`), the lead's shared view, and votes cast over REST or the socket.
 * Rules of the product (DEVELOPERS.md, "The board session"); what the adapter shares is its
 * documented behaviour (socket.io's cluster adapters broadcast to, and fetch sockets from, every
 * node).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { MikroORM } from '@mikro-orm/postgresql';
import { io as connectSocket } from 'socket.io-client';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type {
  BoardMemberView,
  MeetingView,
  PresenceView,
  SessionAck,
  SessionSnapshot,
  TallyView,
  ViewState,
  ViewStateEvent,
} from '@emberline/shared';
import { migrate, openDatabase } from '../../server/src/db';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { ask, connected, nextEvent, type SessionClientSocket } from '../support/live-server';

const repositoryRoot = fileURLToPath(new URL('../..', import.meta.url));
const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-two-processes-test-'));
/** Both processes sign the same cookies: a session started on one is good on the other. */
const sessionSecret = 'two-processes-test-session-secret-5b1e0c93a7d4';
/** A process compiles its TypeScript with tsx on start: slow on a busy machine. */
const startTimeoutMs = 90_000;
const eventTimeoutMs = 15_000;

/** A browser-like HTTP client of one process: keeps cookies and echoes the CSRF token. */
class HttpClient {
  private readonly cookies = new Map<string, string>();

  constructor(readonly baseUrl: string) {}

  cookieHeader(): string {
    return [...this.cookies].map(([name, value]) => `${name}=${value}`).join('; ');
  }

  async request(
    method: 'GET' | 'POST',
    path: string,
    body?: object,
  ): Promise<{ status: number; body: unknown }> {
    if (method !== 'GET' && !this.cookies.has('XSRF-TOKEN'))
      await this.request('GET', '/api/health');
    const headers: Record<string, string> = { Cookie: this.cookieHeader() };
    if (method !== 'GET') headers['X-XSRF-TOKEN'] = this.cookies.get('XSRF-TOKEN') ?? '';
    if (body !== undefined) headers['Content-Type'] = 'application/json';
    const response = await fetch(`${this.baseUrl}${path}`, {
      method,
      headers,
      body: body === undefined ? undefined : JSON.stringify(body),
    });
    for (const line of response.headers.getSetCookie()) {
      const [pair] = line.split(';');
      const at = pair.indexOf('=');
      const name = pair.slice(0, at).trim();
      if (/expires=Thu, 01 Jan 1970/i.test(line)) this.cookies.delete(name);
      else this.cookies.set(name, pair.slice(at + 1));
    }
    const text = await response.text();
    return { status: response.status, body: text ? (JSON.parse(text) as unknown) : null };
  }

  get(path: string) {
    return this.request('GET', path);
  }

  post(path: string, body: object = {}) {
    return this.request('POST', path, body);
  }
}

interface ServerProcess {
  name: string;
  url: string;
  child: ChildProcess;
  output: string[];
  signIn(email: string): Promise<HttpClient>;
  socket(client: HttpClient): SessionClientSocket;
}

const processes: ServerProcess[] = [];
const sockets: SessionClientSocket[] = [];

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address();
      probe.close(() =>
        typeof address === 'object' && address
          ? resolve(address.port)
          : reject(new Error('no port')),
      );
    });
  });
}

/** `server/src/main.ts` as a child process, with the Postgres adapter, once it answers. */
async function startServerProcess(name: string): Promise<ServerProcess> {
  const port = await freePort();
  const url = `http://127.0.0.1:${port}`;
  const output: string[] = [];
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/src/main.ts'], {
    cwd: repositoryRoot,
    env: {
      ...process.env,
      DATABASE_URL: inject('databaseUrl'),
      PORT: String(port),
      HOST: '127.0.0.1',
      PUBLIC_URL: url,
      SESSION_SECRET: sessionSecret,
      SOCKET_ADAPTER: 'postgres',
      ASSESSMENT_IN_SERVER: '0',
      LOGIN_RATE_LIMIT: '1000',
      FILE_STORE_DIR: fileStoreDir,
      DEIDENTIFICATION_SECRET: 'two-processes-test-deidentification-8c2f',
      // API only: the built client, if any, is not this test's business.
      CLIENT_DIST: join(fileStoreDir, 'no-client'),
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  child.stdout?.on('data', (chunk: Buffer) => output.push(`${name}: ${chunk.toString()}`));
  child.stderr?.on('data', (chunk: Buffer) => output.push(`${name}: ${chunk.toString()}`));
  const server: ServerProcess = {
    name,
    url,
    child,
    output,
    async signIn(email) {
      const client = new HttpClient(url);
      const answer = await client.post('/api/auth/login', { email, password: demoPassword });
      expect(answer.status, JSON.stringify(answer.body)).toBe(200);
      return client;
    },
    socket(client) {
      const socket: SessionClientSocket = connectSocket(`${url}/session`, {
        path: '/socket.io',
        transports: ['websocket'],
        extraHeaders: { Cookie: client.cookieHeader(), Origin: url },
        reconnection: false,
      });
      sockets.push(socket);
      return socket;
    },
  };
  processes.push(server);
  // Ready once /api/health answers 200 (the HTTP server listens after everything is wired).
  const startedAt = Date.now();
  for (;;) {
    if (child.exitCode !== null || child.signalCode !== null) {
      throw new Error(`${name} exited while starting:\n${output.join('')}`);
    }
    const status = await fetch(`${url}/api/health`).then(
      (response) => response.status,
      () => 0,
    );
    if (status === 200) return server;
    if (Date.now() - startedAt > startTimeoutMs) {
      throw new Error(`${name} did not answer /api/health in time:\n${output.join('')}`);
    }
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

/** SIGTERM (the process closes its sockets and adapter), then SIGKILL if it lingers. */
async function stopServerProcess(server: ServerProcess, graceMs = 10_000): Promise<void> {
  const { child } = server;
  if (child.exitCode !== null || child.signalCode !== null) return;
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  child.kill('SIGTERM');
  const timer = setTimeout(() => child.kill('SIGKILL'), graceMs);
  await exited;
  clearTimeout(timer);
}

function dataOf<T>(ack: SessionAck<T>): T {
  if (!ack.ok) throw new Error(`refused: ${JSON.stringify(ack.problem)}`);
  return ack.data;
}

let orm: MikroORM;
let ids: DemoIds;
let a: ServerProcess;
let b: ServerProcess;
let meeting: MeetingView;
let members: BoardMemberView[];

const idOf = (email: string) => {
  const found = members.find((entry) => entry.email === email);
  if (!found) throw new Error(`${email} is not a member`);
  return found.userId;
};

const view = (axial: number): ViewState => ({
  agendaItemId: meeting.agenda[0].id,
  seriesId: null,
  slice: { axial, coronal: 12, sagittal: -3 },
  window: { width: 350, level: 40 },
  camera: null,
});

beforeAll(
  async () => {
    orm = await openDatabase(inject('databaseUrl'));
    await migrate(orm);
    ids = await resetToDemo(orm);
    // One after the other: the second finds the first listening when it announces itself.
    a = await startServerProcess('A');
    b = await startServerProcess('B');
  },
  2 * startTimeoutMs + 30_000,
);

afterAll(async () => {
  for (const socket of sockets) socket.close();
  await Promise.all(processes.map((server) => stopServerProcess(server)));
  await orm?.close();
  rmSync(fileStoreDir, { recursive: true, force: true });
}, 30_000);

describe('two server processes sharing the board session', () => {
  let chairSocket: SessionClientSocket;
  let leadSocket: SessionClientSocket;
  let memberSocket: SessionClientSocket;
  let presenterOnA: HttpClient;

  it('schedules a meeting over REST on one process', async () => {
    presenterOnA = await a.signIn('presenter@emberline.test');
    members = (await presenterOnA.get(`/api/boards/${ids.northBoard}/members`))
      .body as BoardMemberView[];
    const scheduled = await presenterOnA.post(`/api/boards/${ids.northBoard}/meetings`, {
      startsAt: new Date(Date.now() + 3_600_000).toISOString(),
      durationMin: 60,
      chairId: idOf('proceduralist@emberline.test'),
    });
    expect(scheduled.status, JSON.stringify(scheduled.body)).toBe(201);
    const added = await presenterOnA.post(
      `/api/meetings/${(scheduled.body as MeetingView).id}/agenda`,
      { caseId: ids.northReady },
    );
    expect(added.status, JSON.stringify(added.body)).toBe(201);
    meeting = added.body as MeetingView;
    expect(meeting.agenda.map((item) => item.caseId)).toEqual([ids.northReady]);
  });

  it('shows on B the members connected to A, and on A the member connected to B', async () => {
    // The chair opens the session on A; the presenter of the first item then leads, on A.
    chairSocket = a.socket(await a.signIn('proceduralist@emberline.test'));
    await connected(chairSocket, eventTimeoutMs);
    const chair = dataOf(
      await ask<SessionSnapshot>(chairSocket, 'session:join', { meetingId: meeting.id }),
    );
    expect(chair.permissions.isChair).toBe(true);
    leadSocket = a.socket(presenterOnA);
    await connected(leadSocket, eventTimeoutMs);
    const lead = dataOf(
      await ask<SessionSnapshot>(leadSocket, 'session:join', { meetingId: meeting.id }),
    );
    expect(lead.permissions.isLead).toBe(true);

    const seenOnA = nextEvent<PresenceView>(
      leadSocket,
      'presence',
      (event) => event.members.some((entry) => entry.userId === idOf('member@emberline.test')),
      eventTimeoutMs,
    );
    memberSocket = b.socket(await b.signIn('member@emberline.test'));
    await connected(memberSocket, eventTimeoutMs);
    const joined = dataOf(
      await ask<SessionSnapshot>(memberSocket, 'session:join', { meetingId: meeting.id }),
    );
    // B asked every process for the sockets in the room: A's two and its own.
    const expected = [
      idOf('member@emberline.test'),
      idOf('presenter@emberline.test'),
      idOf('proceduralist@emberline.test'),
    ].sort();
    expect(joined.presence.members.map((entry) => entry.userId).sort()).toEqual(expected);
    expect(joined.presence.members.every((entry) => entry.isInRoom)).toBe(true);
    expect(joined.presence.leadUserId).toBe(idOf('presenter@emberline.test'));
    // The presence B broadcast on the join reached A's sockets, with the same members.
    const onA = await seenOnA;
    expect(onA.members.map((entry) => entry.userId).sort()).toEqual(expected);
  });

  it("relays the lead's view from A to the follower on B, and only the lead's", async () => {
    // B has never seen this meeting's lead: it asks the database, and refuses the member.
    const refused = await ask(memberSocket, 'view:update', {
      meetingId: meeting.id,
      state: view(7),
    });
    expect(refused.ok ? 200 : refused.problem.status).toBe(403);
    const followed = nextEvent<ViewStateEvent>(
      memberSocket,
      'view:state',
      (event) => event.state.slice?.axial === 42,
      eventTimeoutMs,
    );
    const sent = dataOf(
      await ask<{ sequence: number }>(leadSocket, 'view:update', {
        meetingId: meeting.id,
        state: view(42),
      }),
    );
    const received = await followed;
    expect(received.meetingId).toBe(meeting.id);
    expect(received.sequence).toBe(sent.sequence);
    expect(received.leadUserId).toBe(idOf('presenter@emberline.test'));
    expect(received.state).toEqual(view(42));

    // A burst sent without waiting: every update is answered, in order, and B ends on the last.
    const last = nextEvent<ViewStateEvent>(
      memberSocket,
      'view:state',
      (event) => event.state.slice?.axial === 59,
      eventTimeoutMs,
    );
    const answers = await Promise.all(
      Array.from({ length: 10 }, (_, index) =>
        ask<{ sequence: number }>(leadSocket, 'view:update', {
          meetingId: meeting.id,
          state: view(50 + index),
        }),
      ),
    );
    const sequences = answers.map((answer) => dataOf(answer).sequence);
    expect(sequences).toEqual(sequences.map((_, index) => sent.sequence + 1 + index));
    expect((await last).sequence).toBe(sequences.at(-1));
  });

  it('carries a vote cast over REST on A to B, and one cast on B’s socket to A', async () => {
    const item = meeting.agenda[0].id;
    const supportFor = (tally: TallyView) =>
      tally.rows.find((row) => row.option === 'ablation-mw')?.support;
    const heardOnB = nextEvent<TallyView>(
      memberSocket,
      'vote:tally',
      (tally) => tally.agendaItemId === item && supportFor(tally) === 1,
      eventTimeoutMs,
    );
    const cast = await presenterOnA.post(`/api/agenda-items/${item}/votes`, {
      option: 'ablation-mw',
      position: 'support',
    });
    expect(cast.status, JSON.stringify(cast.body)).toBe(200);
    expect(supportFor(cast.body as TallyView)).toBe(1);
    const onB = await heardOnB;
    expect(onB.voterCount).toBe(1);
    // The broadcast carries no one's own positions.
    expect(onB.mine).toBeUndefined();

    const heardOnA = nextEvent<TallyView>(
      leadSocket,
      'vote:tally',
      (tally) => tally.agendaItemId === item && supportFor(tally) === 2,
      eventTimeoutMs,
    );
    const answered = dataOf(
      await ask<TallyView>(memberSocket, 'vote:cast', {
        agendaItemId: item,
        vote: { option: 'ablation-mw', position: 'support' },
      }),
    );
    expect(supportFor(answered)).toBe(2);
    const onA = await heardOnA;
    expect(onA.voterCount).toBe(2);
    expect(onA.rows.find((row) => row.option === 'ablation-mw')).toMatchObject({
      support: 2,
      oppose: 0,
      abstain: 0,
    });
  });

  it('tells B when a member leaves on A', async () => {
    const left = nextEvent<PresenceView>(
      memberSocket,
      'presence',
      (event) => !event.members.some((entry) => entry.userId === idOf('presenter@emberline.test')),
      eventTimeoutMs,
    );
    leadSocket.close();
    const presence = await left;
    expect(presence.members.map((entry) => entry.userId).sort()).toEqual(
      [idOf('member@emberline.test'), idOf('proceduralist@emberline.test')].sort(),
    );
  });
});
