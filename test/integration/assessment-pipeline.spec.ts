/**
 * The assessment pipeline's promises that do not depend on the engine's figures (those are
 * checked in assessments.spec.ts): no request leaves an assessment stuck or doubled, a job that
 * dies on its last attempt ends the assessment with a reason, and an assessment stays a frozen
 * record of the inputs it ran on when a profile is edited afterwards.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type {
  ApplicatorProfileView,
  AssessmentResult,
  AssessmentView,
  PlanView,
} from '@emberline/shared';
import { seedDemoImaging } from '../../server/seeders/demo-imaging';
import { seedDemoPlans } from '../../server/seeders/demo-plans';
import { Assessment } from '../../server/src/modules/assessments/assessment.entity';
import { finishAssessment } from '../../server/src/modules/assessments/assessment-finish';
import {
  lostJobReason,
  reapAssessments,
} from '../../server/src/modules/assessments/assessment-reaper';
import { type AssessmentRuntime } from '../../server/src/modules/assessments/assessment-runtime';
import { ApplicatorProfileVersion } from '../../server/src/modules/plans/applicator-profile-version.entity';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import { ApiClient, startTestAppWithAssessments, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { setEnvironment } from './imaging-fixtures';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-assessment-pipeline-test-'));
/** Short, so that a killed worker's job expires quickly; no job is worked to the end here. */
const jobExpirySeconds = 3;
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'assessment-pipeline-test-secret-8c1d2e',
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

async function jobsOf(assessmentId: string): Promise<{ id: string; state: string }[]> {
  const client = new pg.Client({ connectionString: inject('databaseUrl') });
  await client.connect();
  try {
    const found = await client.query<{ id: string; state: string }>(
      `select id, state from pgboss.job where data->>'assessmentId' = $1`,
      [assessmentId],
    );
    return found.rows;
  } finally {
    await client.end();
  }
}

async function waitFor<T>(read: () => Promise<T | null>, timeoutMs: number, what: string) {
  const startedAt = Date.now();
  for (;;) {
    const value = await read();
    if (value !== null) return value;
    if (Date.now() - startedAt > timeoutMs) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

/** A new draft of the demo plan, so that each test starts from a plan never assessed. */
async function freshPlan(): Promise<PlanView> {
  const copied = await presenter.post(`/api/plans/${plans[0].id}/copy`, {});
  expect(copied.status, JSON.stringify(copied.body)).toBe(201);
  return copied.body as PlanView;
}

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  // Queue only (workers are started where a test needs one); the reaper is called by the tests
  // themselves, so its timer is set far out.
  ({ testApp, runtime } = await startTestAppWithAssessments({
    isWorking: false,
    fileStoreDir,
    queue: { expireInSeconds: jobExpirySeconds, retryLimit: 0 },
    reaper: { intervalSeconds: 3600 },
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

describe('requests', () => {
  it('answers two concurrent requests with one assessment and one job', async () => {
    const plan = await freshPlan();
    const [first, second] = await Promise.all([
      presenter.post(`/api/plans/${plan.id}/assessments`, { rehearsal: false }),
      presenter.post(`/api/plans/${plan.id}/assessments`, { rehearsal: false }),
    ]);
    expect([first.status, second.status]).toEqual([202, 202]);
    const firstView = first.body as AssessmentView;
    expect((second.body as AssessmentView).id).toBe(firstView.id);
    expect(await testApp.orm.em.fork().count(Assessment, { plan: plan.id })).toBe(1);
    expect(await jobsOf(firstView.id)).toHaveLength(1);
  });

  it('leaves no stuck assessment when the send fails after the row is written', async () => {
    const plan = await freshPlan();
    const send = runtime.queue.send.bind(runtime.queue);
    runtime.queue.send = () => Promise.reject(new Error('connection lost while sending'));
    let view: AssessmentView;
    try {
      const requested = await presenter.post(`/api/plans/${plan.id}/assessments`, {
        rehearsal: false,
      });
      expect(requested.status).toBe(202);
      view = requested.body as AssessmentView;
    } finally {
      runtime.queue.send = send;
    }
    expect(view.status).toBe('queued');
    expect(await jobsOf(view.id)).toHaveLength(0);
    const outcome = await reapAssessments(testApp.orm, runtime.queue, { graceSeconds: 0 });
    expect(outcome.resent).toBeGreaterThanOrEqual(1);
    const jobs = await jobsOf(view.id);
    expect(jobs).toHaveLength(1);
    const stored = await testApp.orm.em.fork().findOneOrFail(Assessment, view.id);
    expect(jobs[0].id).toBe(stored.jobId);
    // A second pass sends nothing twice.
    await reapAssessments(testApp.orm, runtime.queue, { graceSeconds: 0 });
    expect(await jobsOf(view.id)).toHaveLength(1);
  });

  it('accepts a safety profile by id and refuses an unknown one with 404', async () => {
    const plan = await freshPlan();
    const unknown = await presenter.post(`/api/plans/${plan.id}/assessments`, {
      safetyProfileId: '00000000-0000-4000-8000-000000000000',
    });
    expect(unknown.status).toBe(404);
    const malformed = await presenter.post(`/api/plans/${plan.id}/assessments`, {
      safetyProfileId: 'default',
    });
    expect(malformed.status).toBe(400);
  });
});

describe('copy as a new draft', () => {
  it('keeps the geometry and profiles, suffixes the name, and leaves the source as it was', async () => {
    const source = plans[0];
    const first = (await presenter.post(`/api/plans/${source.id}/copy`, {})).body as PlanView;
    const second = (await presenter.post(`/api/plans/${first.id}/copy`, {})).body as PlanView;
    expect(first.status).toBe('draft');
    expect(
      first.applicators.map(({ entry, target, profileId, powerW, timeS }) => ({
        entry,
        target,
        profileId,
        powerW,
        timeS,
      })),
    ).toEqual(
      source.applicators.map(({ entry, target, profileId, powerW, timeS }) => ({
        entry,
        target,
        profileId,
        powerW,
        timeS,
      })),
    );
    expect(first.name).toMatch(/ \(revision \d+\)$/);
    expect(second.name).not.toBe(first.name);
    expect(second.name.replace(/ \(revision \d+\)$/, '')).toBe(source.name);
    const unchanged = (await presenter.get(`/api/plans/${source.id}`)).body as PlanView;
    expect(unchanged.status).toBe(source.status);
    expect(unchanged.name).toBe(source.name);
  });

  it('is refused to a board member (403)', async () => {
    const member = await signedIn('member@emberline.test');
    expect((await member.post(`/api/plans/${plans[0].id}/copy`, {})).status).toBe(403);
  });
});

describe('a worker killed on its last attempt', () => {
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
        ASSESSMENT_RETRY_LIMIT: '0',
        ASSESSMENT_REAPER_SECONDS: '3600',
      },
      stdio: ['ignore', 'ignore', 'pipe'],
    });
    child.stderr?.on('data', (chunk: Buffer) => testApp.logs.push(`worker: ${chunk.toString()}`));
    return child;
  }

  it('ends the assessment failed with a reason, and the plan can be assessed again', async () => {
    const plan = await freshPlan();
    // Settle what earlier tests queued, so that the worker takes this plan's job.
    await testApp.orm.em
      .fork()
      .nativeUpdate(
        Assessment,
        { status: { $in: ['queued', 'running'] } },
        { status: 'failed', error: 'settled by the test' },
      );
    const worker = startWorker();
    let id: string;
    try {
      const requested = await presenter.post(`/api/plans/${plan.id}/assessments`, {
        rehearsal: false,
      });
      expect(requested.status).toBe(202);
      id = (requested.body as AssessmentView).id;
      await waitFor(
        () => testApp.orm.em.fork().findOne(Assessment, { id, status: 'running' }),
        60_000,
        'the worker to start the job',
      );
    } finally {
      await new Promise<void>((resolve) => {
        if (worker.exitCode !== null || worker.signalCode !== null) resolve();
        worker.once('exit', () => resolve());
        worker.kill('SIGKILL');
      });
    }
    // pg-boss expires the silent job and, with no retry left, fails it.
    await waitFor(
      async () => ((await jobsOf(id))[0]?.state === 'failed' ? true : null),
      60_000,
      'pg-boss to fail the expired job',
    );
    const outcome = await reapAssessments(testApp.orm, runtime.queue, { graceSeconds: 0 });
    expect(outcome.failed).toBe(1);
    const ended = (await presenter.get(`/api/assessments/${id}`)).body as AssessmentView;
    expect(ended.status).toBe('failed');
    expect(ended.error).toBe(lostJobReason);
    const storedPlan = await testApp.orm.em.fork().findOneOrFail(NeedlePlan, plan.id);
    expect(storedPlan.status).toBe('assessment-failed');

    // Failed means a draft again: it may be corrected before the next request.
    const corrected = await presenter.patch(`/api/plans/${plan.id}`, {
      notes: 'Corrected after a failed assessment.',
    });
    expect(corrected.status).toBe(200);
    expect((corrected.body as PlanView).status).toBe('draft');

    const again = await presenter.post(`/api/plans/${plan.id}/assessments`, { rehearsal: false });
    expect(again.status).toBe(202);
    expect((again.body as AssessmentView).id).not.toBe(id);
    expect((again.body as AssessmentView).status).toBe('queued');
  }, 150_000);
});

describe('a frozen record', () => {
  /** Stands in for the engine's figures (checked elsewhere): only their survival matters here. */
  const storedResult = {
    engineVersion: 'as stored',
    verdict: { level: 'acceptable', reasons: [] },
  };

  it('keeps its snapshot and result when a profile it used is edited, and the plan says what changed', async () => {
    const plan = await freshPlan();
    const requested = (
      await presenter.post(`/api/plans/${plan.id}/assessments`, { rehearsal: false })
    ).body as AssessmentView;
    expect(requested.inputs?.applicatorProfiles).toHaveLength(1);
    const used = requested.inputs?.applicatorProfiles[0];
    expect(used?.version).toBeGreaterThanOrEqual(1);
    await finishAssessment(testApp.orm, requested.id, 'done', {
      result: storedResult as unknown as AssessmentResult,
    });
    const profileId = plan.applicators[0].profileId;
    const before = (await admin.get(`/api/admin/applicator-profiles/${profileId}`))
      .body as ApplicatorProfileView;
    const editedTable = before.zoneTable.map((row, index) =>
      index === 0 ? { ...row, zoneWidthMm: row.zoneWidthMm + 1 } : row,
    );
    const edited = await admin.patch(`/api/admin/applicator-profiles/${profileId}`, {
      zoneTable: editedTable,
    });
    expect(edited.status).toBe(200);
    expect((edited.body as ApplicatorProfileView).version).toBe(before.version + 1);

    // A second edit of the new version, which no assessment has used yet, stays that version.
    const notes = await admin.patch(`/api/admin/applicator-profiles/${profileId}`, {
      zoneTable: editedTable.map((row, index) =>
        index === 1 ? { ...row, zoneLengthMm: row.zoneLengthMm + 1 } : row,
      ),
    });
    expect((notes.body as ApplicatorProfileView).version).toBe(before.version + 1);

    const stored = await testApp.orm.em.fork().findOneOrFail(Assessment, requested.id);
    expect(stored.result).toEqual(storedResult);
    expect(stored.snapshot?.applicatorProfiles[0].zoneTable).toEqual(before.zoneTable);
    expect(stored.snapshot?.applicatorProfiles[0].version).toBe(before.version);
    const frozen = await testApp.orm.em
      .fork()
      .findOneOrFail(ApplicatorProfileVersion, { profile: profileId, version: before.version });
    expect(frozen.zoneTable).toEqual(before.zoneTable);

    const listed = (await presenter.get(`/api/plans/${plan.id}/assessments`))
      .body as AssessmentView[];
    expect(listed[0].id).toBe(requested.id);
    expect(listed[0].inputs?.applicatorProfiles[0].version).toBe(before.version);
    expect(listed[0].inputChanges?.map((change) => change.kind)).toEqual(['applicator-profile']);
    expect(listed[0].inputChanges?.[0].message).toContain(`version ${before.version + 1}`);

    const renewed = (
      await presenter.post(`/api/plans/${plan.id}/assessments`, { rehearsal: false })
    ).body as AssessmentView;
    expect(renewed.id).not.toBe(requested.id);
    expect(renewed.inputs?.applicatorProfiles[0].version).toBe(before.version + 1);
  });

  it('reuses a stored result only for an identical snapshot', async () => {
    const plan = await freshPlan();
    const first = (await presenter.post(`/api/plans/${plan.id}/assessments`, { rehearsal: false }))
      .body as AssessmentView;
    await finishAssessment(testApp.orm, first.id, 'done', {
      result: storedResult as unknown as AssessmentResult,
    });
    const same = (await presenter.post(`/api/plans/${plan.id}/assessments`, { rehearsal: false }))
      .body as AssessmentView;
    expect(same.id).toBe(first.id);
    const other = await admin.post('/api/admin/safety-profiles', {
      ...(await presenter.get('/api/safety-profiles/default')).body,
      id: undefined,
      createdAt: undefined,
      updatedAt: undefined,
      version: undefined,
      isDefault: false,
      name: `Stricter board ${Date.now()}`,
    });
    expect(other.status, JSON.stringify(other.body)).toBe(201);
    const underOther = (
      await presenter.post(`/api/plans/${plan.id}/assessments`, {
        safetyProfileId: (other.body as { id: string }).id,
      })
    ).body as AssessmentView;
    expect(underOther.id).not.toBe(first.id);
    expect(underOther.inputs?.safetyProfile.name).toMatch(/^Stricter board/);
  });
});
