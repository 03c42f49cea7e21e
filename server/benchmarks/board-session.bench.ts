/**
 * How fast the lead's shared view reaches the followers of a live board session, end to end:
 * real server processes (`server/src/main.ts`), real sign-ins, real `/session` sockets. Each room
 * has a chair who opens the session and so leads the view (its agenda is empty), and `--clients`
 * followers; every lead sends `view:update` at `--hz`, its send time (this process's clock, in
 * ms) carried in `state.slice.axial`, and every follower records receive time − send time. Leads
 * and followers live in this one process, so both times come from the same clock.
 *
 * Aim: p95 under 50 ms with one process at the defaults (10 rooms × 20 followers, 20 Hz); the
 * relay sends at most every 40 ms per meeting (latest wins), so at 20 Hz a follower should get
 * nearly every update. Not a test: run it and read the figures.
 *
 *   node --import tsx server/benchmarks/board-session.bench.ts [--processes 1|2] [--rooms 10]
 *     [--clients 20] [--hz 20] [--seconds 20] [--adapter postgres|none] [--profile <dir>]
 *
 * With `--processes 2` the rooms' members are spread over both processes (the leads too), so
 * half of every room hears the view through the Postgres adapter (`SOCKET_ADAPTER=postgres`);
 * one process runs without the adapter unless `--adapter postgres` says otherwise. The script
 * uses the project's PostgreSQL cluster (started if it is not running), builds a database of its
 * own (`emberline_bench`) from the migrations with invented users, and drops it at the end.
 * The clients share the machine with the servers: on a small machine the figures include this
 * process's own event-loop delays, and the CPU seconds printed show who spent what.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import { fileURLToPath } from 'node:url';
import { ref } from '@mikro-orm/core';
import pg from 'pg';
import { io as connectSocket, type Socket } from 'socket.io-client';
import type {
  SessionAck,
  SessionClientEvents,
  SessionServerEvents,
  SessionSnapshot,
  ViewState,
} from '@emberline/shared';
import {
  connectionUrl,
  dropDatabase,
  ensureDatabase,
  startPostgres,
} from '../scripts/postgres.mjs';
import { migrate, openDatabase } from '../src/db';
import { Board } from '../src/modules/boards/board.entity';
import { BoardMembership } from '../src/modules/boards/board-membership.entity';
import { Meeting } from '../src/modules/meetings/meeting.entity';
import { hashPassword } from '../src/modules/users/password';
import { User } from '../src/modules/users/user.entity';

type SessionSocket = Socket<SessionServerEvents, SessionClientEvents>;

const repositoryRoot = fileURLToPath(new URL('../..', import.meta.url));
const databaseName = 'emberline_bench';
const password = 'bench-password-not-for-use-7c41';

function option(name: string, fallback: string): string {
  const at = process.argv.indexOf(`--${name}`);
  return at >= 0 && process.argv[at + 1] ? process.argv[at + 1] : fallback;
}
function positiveInteger(name: string, fallback: number): number {
  const value = Number(option(name, String(fallback)));
  if (!Number.isInteger(value) || value < 1) throw new Error(`--${name} takes a whole number ≥ 1`);
  return value;
}

const processCount = positiveInteger('processes', 1);
if (processCount > 2) throw new Error('--processes takes 1 or 2');
const roomCount = positiveInteger('rooms', 10);
const clientsPerRoom = positiveInteger('clients', 20);
const hz = positiveInteger('hz', 20);
const seconds = positiveInteger('seconds', 20);
const adapter = option('adapter', processCount > 1 ? 'postgres' : 'none');
if (adapter !== 'postgres' && adapter !== 'none') throw new Error('--adapter is postgres or none');
const profileDir = option('profile', '');
if (processCount > 1 && adapter === 'none') {
  throw new Error('two processes share the rooms only through the adapter: --adapter postgres');
}

/** Milliseconds on this process's clock, with a fraction; what the leads send and followers read. */
const now = () => performance.timeOrigin + performance.now();
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/** Runs `work` over `items` with at most `limit` at a time. */
async function inBatches<T, R>(items: T[], limit: number, work: (item: T) => Promise<R>) {
  const results: R[] = new Array<R>(items.length);
  let next = 0;
  const lanes = Array.from({ length: Math.min(limit, items.length) }, async () => {
    while (next < items.length) {
      const index = next++;
      results[index] = await work(items[index]);
    }
  });
  await Promise.all(lanes);
  return results;
}

// ---------------------------------------------------------------- the server processes

interface ServerProcess {
  url: string;
  child: ChildProcess;
  /** The last lines the process wrote, for an error message. */
  tail: string[];
  errorLines: number;
}

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

async function startServer(
  name: string,
  databaseUrl: string,
  sessionSecret: string,
  fileStoreDir: string,
): Promise<ServerProcess> {
  const port = await freePort();
  const url = `http://127.0.0.1:${port}`;
  // `--profile <dir>`: each server writes a V8 CPU profile there when it stops.
  const profiling = profileDir ? ['--cpu-prof', `--cpu-prof-dir=${profileDir}`] : [];
  const child = spawn(process.execPath, [...profiling, '--import', 'tsx', 'server/src/main.ts'], {
    cwd: repositoryRoot,
    env: {
      ...process.env,
      DATABASE_URL: databaseUrl,
      PORT: String(port),
      HOST: '127.0.0.1',
      PUBLIC_URL: url,
      SESSION_SECRET: sessionSecret,
      ASSESSMENT_IN_SERVER: '0',
      // Every bench user signs in once, from the one loopback address.
      LOGIN_RATE_LIMIT: '100000',
      FILE_STORE_DIR: fileStoreDir,
      DEIDENTIFICATION_SECRET: 'bench-deidentification-secret-0d93',
      CLIENT_DIST: join(fileStoreDir, 'no-client'),
      SOCKET_ADAPTER: adapter === 'postgres' ? 'postgres' : '',
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  const server: ServerProcess = { url, child, tail: [], errorLines: 0 };
  const keep = (chunk: Buffer) => {
    for (const line of chunk.toString().split('\n').filter(Boolean)) {
      if (line.includes('"level":"error"')) server.errorLines += 1;
      server.tail.push(`${name}: ${line}`);
      if (server.tail.length > 40) server.tail.shift();
    }
  };
  child.stdout?.on('data', keep);
  child.stderr?.on('data', keep);
  servers.push(server);
  const startedAt = Date.now();
  for (;;) {
    if (child.exitCode !== null || child.signalCode !== null) {
      throw new Error(`server ${name} exited while starting:\n${server.tail.join('\n')}`);
    }
    const status = await fetch(`${url}/api/health`).then(
      (response) => response.status,
      () => 0,
    );
    if (status === 200) return server;
    if (Date.now() - startedAt > 120_000) {
      throw new Error(`server ${name} did not answer /api/health:\n${server.tail.join('\n')}`);
    }
    await sleep(200);
  }
}

async function stopServer(server: ServerProcess): Promise<void> {
  const { child } = server;
  if (child.exitCode !== null || child.signalCode !== null) return;
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  child.kill('SIGTERM');
  const timer = setTimeout(() => child.kill('SIGKILL'), 10_000);
  await exited;
  clearTimeout(timer);
}

/** Transactions the bench database has committed or rolled back (its statistics, ≤ 1 s late). */
async function transactionsOf(databaseUrl: string): Promise<number> {
  const client = new pg.Client({ connectionString: databaseUrl });
  await client.connect();
  try {
    const { rows } = await client.query<{ count: string }>(
      'select xact_commit + xact_rollback as count from pg_stat_database where datname = $1',
      [databaseName],
    );
    return Number(rows[0]?.count ?? NaN);
  } finally {
    await client.end();
  }
}

/** CPU seconds a child has used (Linux /proc; utime + stime at 100 ticks a second). */
function cpuSecondsOf(pid: number | undefined): number {
  if (!pid) return NaN;
  try {
    const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return (Number(fields[11]) + Number(fields[12])) / 100;
  } catch {
    return NaN;
  }
}

// ---------------------------------------------------------------- the people and the rooms

interface Person {
  email: string;
  userId: string;
  room: number;
  server: ServerProcess;
  isLead: boolean;
  cookie?: string;
  socket?: SessionSocket;
  received: number;
}

interface Room {
  meetingId: string;
  lead: Person;
  followers: Person[];
  sent: number;
  refused: number;
}

async function seed(databaseUrl: string): Promise<{ meetingId: string; people: Person[] }[]> {
  const orm = await openDatabase(databaseUrl);
  try {
    await migrate(orm);
    const em = orm.em.fork();
    const board = new Board('Benchmark board', 'Invented members for the board-session benchmark.');
    em.persist(board);
    // One hash for every invented account: each sign-in still verifies it in full.
    const passwordHash = await hashPassword(password);
    const user = (email: string, name: string, role: 'proceduralist' | 'board-member') => {
      const created = new User(email, name);
      created.roles = [role];
      created.passwordHash = passwordHash;
      em.persist(created);
      em.persist(
        new BoardMembership(
          ref(board),
          ref(created),
          role === 'proceduralist' ? 'interventional-radiology' : 'diagnostic-radiology',
        ),
      );
      return created;
    };
    const rooms = [];
    for (let room = 0; room < roomCount; room++) {
      const chair = user(
        `chair-${room}@bench.emberline.test`,
        `Bench chair ${room}`,
        'proceduralist',
      );
      const meeting = new Meeting({
        board: ref(board),
        startsAt: new Date(Date.now() + 3_600_000),
        durationMin: 120,
        chair: ref(chair),
        scheduledBy: ref(chair),
      });
      em.persist(meeting);
      const people = [{ email: chair.email, userId: chair.id, isLead: true }];
      for (let client = 0; client < clientsPerRoom; client++) {
        const follower = user(
          `member-${room}-${client}@bench.emberline.test`,
          `Bench member ${room}.${client}`,
          'board-member',
        );
        people.push({ email: follower.email, userId: follower.id, isLead: false });
      }
      rooms.push({ meetingId: meeting.id, people });
    }
    await em.flush();
    return rooms.map(({ meetingId, people }, room) => ({
      meetingId,
      people: people.map((person, index) => ({
        ...person,
        room,
        // Every other member on the other process; the leads alternate too.
        server: servers[(room + index) % servers.length],
        received: 0,
      })),
    }));
  } finally {
    await orm.close();
  }
}

/** Signs in over HTTP as the browser does (XSRF-TOKEN from a GET, echoed on the POST). */
async function signIn(person: Person): Promise<void> {
  const health = await fetch(`${person.server.url}/api/health`);
  const xsrf = health.headers
    .getSetCookie()
    .map((line) => line.split(';')[0])
    .find((pair) => pair.startsWith('XSRF-TOKEN='));
  if (!xsrf) throw new Error('the server set no XSRF-TOKEN cookie');
  const response = await fetch(`${person.server.url}/api/auth/login`, {
    method: 'POST',
    headers: {
      'Content-Type': 'application/json',
      Cookie: xsrf,
      'X-XSRF-TOKEN': xsrf.slice('XSRF-TOKEN='.length),
    },
    body: JSON.stringify({ email: person.email, password }),
  });
  if (response.status !== 200) {
    throw new Error(
      `${person.email} could not sign in: ${response.status} ${await response.text()}`,
    );
  }
  const session = response.headers
    .getSetCookie()
    .map((line) => line.split(';')[0])
    .find((pair) => pair.startsWith('emberline.sid='));
  if (!session) throw new Error(`${person.email}: no session cookie`);
  person.cookie = session;
}

function ask<T>(socket: SessionSocket, event: keyof SessionClientEvents, payload: unknown) {
  return (
    socket.timeout(30_000) as unknown as {
      emitWithAck(event: string, payload: unknown): Promise<SessionAck<T>>;
    }
  ).emitWithAck(event, payload);
}

async function joinRoom(person: Person, meetingId: string): Promise<SessionSnapshot> {
  const socket: SessionSocket = connectSocket(`${person.server.url}/session`, {
    path: '/socket.io',
    transports: ['websocket'],
    extraHeaders: { Cookie: person.cookie ?? '', Origin: person.server.url },
    reconnection: false,
  });
  person.socket = socket;
  await new Promise<void>((resolve, reject) => {
    socket.once('connect', () => resolve());
    socket.once('connect_error', reject);
  });
  const answer = await ask<SessionSnapshot>(socket, 'session:join', { meetingId });
  if (!answer.ok) throw new Error(`${person.email} could not join: ${answer.problem.detail}`);
  return answer.data;
}

// ---------------------------------------------------------------- the run

const servers: ServerProcess[] = [];
const everyone: Person[] = [];
let fileStoreDir = '';
let isCleanedUp = false;

async function cleanUp(): Promise<void> {
  if (isCleanedUp) return;
  isCleanedUp = true;
  for (const person of everyone) person.socket?.close();
  await Promise.all(servers.map((server) => stopServer(server)));
  await dropDatabase(databaseName).catch((error: unknown) =>
    console.error(`could not drop ${databaseName}:`, error),
  );
  if (fileStoreDir) rmSync(fileStoreDir, { recursive: true, force: true });
}
process.once('SIGINT', () => {
  void cleanUp().finally(() => process.exit(130));
});

function percentile(sorted: number[], share: number): number {
  if (!sorted.length) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil(share * sorted.length) - 1)];
}

const format = (value: number, digits = 1) => value.toFixed(digits);

async function run(): Promise<void> {
  startPostgres();
  await dropDatabase(databaseName);
  await ensureDatabase(databaseName);
  const databaseUrl = connectionUrl(databaseName);
  fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-bench-'));
  const sessionSecret = randomBytes(32).toString('base64url');

  console.log(`starting ${processCount} server process(es)…`);
  for (let index = 0; index < processCount; index++) {
    await startServer(String.fromCharCode(65 + index), databaseUrl, sessionSecret, fileStoreDir);
  }
  const seeded = await seed(databaseUrl);
  const rooms: Room[] = seeded.map(({ meetingId, people }) => {
    everyone.push(...people);
    return {
      meetingId,
      lead: people[0],
      followers: people.slice(1),
      sent: 0,
      refused: 0,
    };
  });

  console.log(`signing in ${everyone.length} users…`);
  await inBatches(everyone, 4, signIn);
  console.log('joining the rooms…');
  // The chair's join opens the session and makes the chair the lead (the agenda is empty).
  for (const room of rooms) {
    const snapshot = await joinRoom(room.lead, room.meetingId);
    if (!snapshot.permissions.isLead) throw new Error(`${room.lead.email} does not lead`);
  }
  await inBatches(
    rooms.flatMap((room) => room.followers.map((person) => ({ person, room }))),
    8,
    ({ person, room }) => joinRoom(person, room.meetingId),
  );

  // The presence broadcasts of the joins settle before the clock starts.
  await sleep(1000);
  const latencies: number[] = [];
  let windowStart = Infinity;
  for (const room of rooms) {
    for (const follower of room.followers) {
      follower.socket?.on('view:state', (event) => {
        const sentAt = event.state.slice?.axial ?? NaN;
        if (!(sentAt >= windowStart)) return;
        latencies.push(now() - sentAt);
        follower.received += 1;
      });
    }
  }

  const transactionsBefore = await transactionsOf(databaseUrl);
  const serverCpuBefore = servers.map((server) => cpuSecondsOf(server.child.pid));
  const ownCpuBefore = process.cpuUsage();
  const periodMs = 1000 / hz;
  windowStart = now();
  const windowEnd = windowStart + seconds * 1000;
  console.log(`measuring for ${seconds} s…`);
  const timers: NodeJS.Timeout[] = [];
  await Promise.all(
    rooms.map(async (room, index) => {
      // The rooms' leads are spread over the period, as independent people would be.
      await sleep((index * periodMs) / rooms.length);
      const socket = room.lead.socket;
      if (!socket) throw new Error('the lead has no socket');
      const send = () => {
        const sentAt = now();
        if (sentAt >= windowEnd) return;
        const state: ViewState = {
          agendaItemId: null,
          seriesId: null,
          slice: { axial: sentAt, coronal: room.sent, sagittal: 0 },
          window: { width: 400, level: 50 },
          camera: null,
        };
        room.sent += 1;
        socket.emit(
          'view:update',
          { meetingId: room.meetingId, state },
          (answer: SessionAck<{ sequence: number }>) => {
            if (!answer.ok) room.refused += 1;
          },
        );
      };
      send();
      timers.push(setInterval(send, periodMs));
    }),
  );
  await sleep(Math.max(0, windowEnd - now()));
  for (const timer of timers) clearInterval(timer);
  // What is still on its way (the relay holds an update for up to 40 ms).
  await sleep(1000);
  const serverCpu = servers.map(
    (server, index) => cpuSecondsOf(server.child.pid) - serverCpuBefore[index],
  );
  const ownCpu = process.cpuUsage(ownCpuBefore);
  // Less this query's own transaction.
  const transactions = (await transactionsOf(databaseUrl)) - transactionsBefore - 1;

  const sorted = [...latencies].sort((left, right) => left - right);
  const shares = rooms
    .flatMap((room) =>
      room.followers.map((follower) => (room.sent ? follower.received / room.sent : 0)),
    )
    .sort((left, right) => left - right);
  const sent = rooms.reduce((sum, room) => sum + room.sent, 0);
  const refused = rooms.reduce((sum, room) => sum + room.refused, 0);
  const errorLines = servers.reduce((sum, server) => sum + server.errorLines, 0);
  const percent = (value: number) => `${format(value * 100)}%`;

  console.log('');
  console.log(`processes        ${processCount} (adapter: ${adapter})`);
  console.log(`rooms            ${roomCount}`);
  console.log(
    `clients          ${clientsPerRoom} followers per room (${roomCount * clientsPerRoom} in all) + ${roomCount} leads`,
  );
  console.log(`rate             ${hz} view:update a second per lead`);
  console.log(`duration         ${seconds} s`);
  console.log(`sent             ${sent} updates (${refused} refused)`);
  console.log(
    `delivered        ${latencies.length} view:state, ${format(latencies.length / seconds, 0)} a second`,
  );
  console.log(
    `latency ms       p50 ${format(percentile(sorted, 0.5))}  p95 ${format(percentile(sorted, 0.95))}` +
      `  p99 ${format(percentile(sorted, 0.99))}  max ${format(sorted.at(-1) ?? NaN)}`,
  );
  console.log(
    `share received   min ${percent(shares[0] ?? NaN)}  median ${percent(percentile(shares, 0.5))}` +
      `  mean ${percent(shares.reduce((sum, share) => sum + share, 0) / (shares.length || 1))}` +
      ` (of the lead's updates, per follower)`,
  );
  console.log(
    `cpu s            servers ${serverCpu.map((value) => format(value)).join(' + ')},` +
      ` this process ${format((ownCpu.user + ownCpu.system) / 1e6)}`,
  );
  console.log(
    `database         ${transactions} transactions, ${format(transactions / seconds, 0)} a second`,
  );
  console.log(`server errors    ${errorLines} logged`);
  console.log(
    `aim              p95 under 50 ms with one process${processCount > 1 ? ' (this run: two)' : ''}: ${
      percentile(sorted, 0.95) < 50 ? 'met' : 'not met'
    }`,
  );
}

try {
  await run();
} catch (error) {
  console.error(error);
  for (const server of servers) console.error(server.tail.join('\n'));
  process.exitCode = 1;
} finally {
  await cleanUp();
}
