/**
 * The assessment queue across processes: progress pushed live to a watching socket, and a
 * worker process killed mid-job — pg-boss expires the job and another worker finishes it,
 * exactly once (one result, one completed job, the plan assessed once).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { io as connectSocket, type Socket } from 'socket.io-client';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type {
  AssessmentProgressEvent,
  AssessmentView,
  ClientToServerEvents,
  PlanView,
  SafetyProfileView,
  ServerToClientEvents,
} from '@emberline/shared';
import { seedDemoImaging } from '../../server/seeders/demo-imaging';
import { seedDemoPlans } from '../../server/seeders/demo-plans';
import { AssessmentProgressListener } from '../../server/src/modules/assessments/assessment-progress';
import { type AssessmentRuntime } from '../../server/src/modules/assessments/assessment-runtime';
import {
  assessmentSocketFeature,
  relayProgress,
} from '../../server/src/modules/assessments/assessment.socket';
import { Assessment } from '../../server/src/modules/assessments/assessment.entity';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import { BoardRoom } from '../../server/src/modules/board-session/board-room';
import { sessionMiddleware } from '../../server/src/modules/auth/session';
import { createRealtimeServer, type EmberlineServer } from '../../server/src/realtime/io';
import {
  ApiClient,
  sessionCookieOf,
  startTestAppWithAssessments,
  type TestApp,
} from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { setEnvironment } from './imaging-fixtures';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-assessment-queue-test-'));
// Longer than one job takes here (a few seconds, more on a busy machine), or pg-boss would
// expire and retry a job that is still running.
const jobExpirySeconds = 30;
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'assessment-queue-test-secret-3f9a6d21c7e5',
  IMAGING_READ_TIMEOUT_MS: '20000',
};

let restoreEnvironment: () => void = () => undefined;
let testApp: TestApp;
let runtime: AssessmentRuntime;
let ids: DemoIds;
let presenter: ApiClient;
let admin: ApiClient;
let plans: PlanView[];

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

/** Changes the default safety profile a little, so that every plan's inputs change. */
async function nudgeSafetyProfile(): Promise<void> {
  const current = (await admin.get('/api/admin/safety-profiles')).body as SafetyProfileView[];
  const profile = current.find((entry) => entry.isDefault);
  if (!profile) throw new Error('no default safety profile');
  const response = await admin.patch(`/api/admin/safety-profiles/${profile.id}`, {
    maximumAngulationDeg: profile.maximumAngulationDeg + 1,
  });
  expect(response.status).toBe(200);
}

async function waitFor<T>(
  read: () => Promise<T | null>,
  timeoutMs: number,
  what: string,
): Promise<T> {
  const startedAt = Date.now();
  for (;;) {
    const value = await read();
    if (value !== null) return value;
    if (Date.now() - startedAt > timeoutMs) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  // This process only queues: the workers are the child processes below, or none.
  ({ testApp, runtime } = await startTestAppWithAssessments({
    isWorking: false,
    fileStoreDir,
    queue: { expireInSeconds: jobExpirySeconds },
  }));
  ids = await resetToDemo(testApp.orm);
  expect(await seedDemoImaging(testApp.orm.em.fork())).toBe(true);
  expect(await seedDemoPlans(testApp.orm.em.fork())).toBe(true);
  presenter = await signedIn('presenter@emberline.test');
  admin = await signedIn('admin@emberline.test');
  plans = (await presenter.get(`/api/cases/${ids.northReady}/plans`)).body as PlanView[];
}, 120_000);

afterAll(async () => {
  await runtime?.close();
  await testApp?.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
});

/** `npm run worker` against the test database and file store. */
function startWorker(): ChildProcess {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/src/worker-main.ts'], {
    env: {
      ...process.env,
      ...testEnvironment,
      DATABASE_URL: inject('databaseUrl'),
      ASSESSMENT_THREADS: '1',
      ASSESSMENT_POLLING_SECONDS: '0.5',
      ASSESSMENT_MAINTENANCE_SECONDS: '1',
      ASSESSMENT_JOB_EXPIRE_SECONDS: String(jobExpirySeconds),
    },
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  child.stderr?.on('data', (chunk: Buffer) => testApp.logs.push(`worker: ${chunk.toString()}`));
  return child;
}

async function stopped(child: ChildProcess, signal: NodeJS.Signals): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return;
  await new Promise<void>((resolve) => {
    child.once('exit', () => resolve());
    child.kill(signal);
  });
}

describe('a worker process killed in the middle of a job', () => {
  it('leaves the job to another worker, which finishes it exactly once', async () => {
    await nudgeSafetyProfile();
    const plan = plans[0];
    const first = startWorker();
    const second: ChildProcess[] = [];
    try {
      const requested = await presenter.post(`/api/plans/${plan.id}/assessments`, {
        rehearsal: false,
      });
      expect(requested.status).toBe(202);
      const { id } = requested.body as AssessmentView;
      await waitFor(
        async () => {
          const found = await testApp.orm.em.fork().findOne(Assessment, { id, status: 'running' });
          return found ? found : null;
        },
        60_000,
        'the first worker to start the job',
      );
      await stopped(first, 'SIGKILL');
      second.push(startWorker());
      const done = await waitFor(
        async () => {
          const found = await testApp.orm.em.fork().findOne(Assessment, { id });
          return found && (found.status === 'done' || found.status === 'failed') ? found : null;
        },
        120_000,
        'the second worker to finish the job',
      );
      expect(done.status, done.error ?? '').toBe('done');
      expect(done.attempts).toBe(2);
      expect(done.result?.applicators).toHaveLength(1);
      // One pg-boss job for the assessment, completed once after one retry.
      const client = new pg.Client({ connectionString: inject('databaseUrl') });
      await client.connect();
      try {
        const jobs = await client.query<{ state: string; retry_count: number }>(
          `select state, retry_count from pgboss.job where data->>'assessmentId' = $1`,
          [id],
        );
        expect(jobs.rows).toHaveLength(1);
        expect(jobs.rows[0].state).toBe('completed');
        expect(jobs.rows[0].retry_count).toBe(1);
      } finally {
        await client.end();
      }
      const storedPlan = await testApp.orm.em.fork().findOneOrFail(NeedlePlan, { id: plan.id });
      expect(storedPlan.status).toBe('assessed');
      expect(await testApp.orm.em.fork().count(Assessment, { plan: plan.id, status: 'done' })).toBe(
        1,
      );
    } finally {
      await stopped(first, 'SIGKILL');
      for (const child of second) await stopped(child, 'SIGTERM');
    }
  }, 240_000);
});

describe('progress over Socket.IO', () => {
  let server: Server;
  let io: EmberlineServer;
  let listener: AssessmentProgressListener;
  let sessionPool: pg.Pool;
  let baseUrl: string;

  beforeAll(async () => {
    sessionPool = new pg.Pool({ connectionString: inject('databaseUrl'), max: 2 });
    server = createServer(testApp.app);
    io = createRealtimeServer(
      server,
      {
        orm: testApp.orm,
        config: testApp.config,
        session: sessionMiddleware(testApp.config, sessionPool),
        boardRoom: new BoardRoom(),
        log: (message) => testApp.logs.push(message),
      },
      [assessmentSocketFeature(testApp.orm, (message) => testApp.logs.push(message))],
    );
    listener = new AssessmentProgressListener(
      inject('databaseUrl'),
      relayProgress(io),
      () => undefined,
    );
    await listener.start();
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  });

  afterAll(async () => {
    await listener?.close();
    await io?.close();
    await sessionPool?.end();
  });

  function socketOf(cookie: string): Socket<ServerToClientEvents, ClientToServerEvents> {
    return connectSocket(baseUrl, {
      path: '/socket.io',
      transports: ['websocket'],
      extraHeaders: { Cookie: cookie, Origin: testApp.config.publicUrl },
      reconnection: false,
    });
  }

  it('refuses a socket without a session', async () => {
    const socket = socketOf('emberline.sid=nothing');
    const error = await new Promise<Error>((resolve) => socket.on('connect_error', resolve));
    expect(error.message).toMatch(/Sign in/);
    socket.close();
  });

  it('pushes each step of a job to the sockets watching it, up to done', async () => {
    await nudgeSafetyProfile();
    const worker = startWorker();
    const socket = socketOf(sessionCookieOf(presenter));
    try {
      await new Promise<void>((resolve, reject) => {
        socket.on('connect', () => resolve());
        socket.on('connect_error', reject);
      });
      const requested = await presenter.post(`/api/plans/${plans[1].id}/assessments`, {
        rehearsal: false,
      });
      expect(requested.status).toBe(202);
      const { id } = requested.body as AssessmentView;
      const events: AssessmentProgressEvent[] = [];
      const finished = new Promise<AssessmentProgressEvent>((resolve) => {
        socket.on('assessment:progressed', (event) => {
          events.push(event);
          if (event.status === 'done' || event.status === 'failed') resolve(event);
        });
      });
      const acknowledgement = await socket.emitWithAck('assessment:watch', { assessmentId: id });
      expect(acknowledgement.ok).toBe(true);
      const last = await finished;
      expect(last.status).toBe('done');
      expect(last.progress).toBe(1);
      const running = events.filter((event) => event.status === 'running');
      expect(running.length).toBeGreaterThan(1);
      for (let index = 1; index < running.length; index++) {
        expect(running[index].progress).toBeGreaterThanOrEqual(running[index - 1].progress);
      }
      expect(
        running.some((event) => typeof event.stage === 'string' && event.stage.length > 0),
      ).toBe(true);
    } finally {
      socket.close();
      await stopped(worker, 'SIGTERM');
    }
  }, 180_000);

  it('does not let a user of another board watch the assessment', async () => {
    const south = await signedIn('south@emberline.test');
    const listed = (await presenter.get(`/api/plans/${plans[1].id}/assessments`))
      .body as AssessmentView[];
    const socket = socketOf(sessionCookieOf(south));
    try {
      await new Promise<void>((resolve) => socket.on('connect', () => resolve()));
      const acknowledgement = await socket.emitWithAck('assessment:watch', {
        assessmentId: listed[0].id,
      });
      expect(acknowledgement).toEqual({
        ok: false,
        status: 404,
        detail: 'The assessment was not found.',
      });
    } finally {
      socket.close();
    }
  });
});
