/**
 * Runs one queued assessment: marks it running, gathers its inputs, runs the engine in the
 * pool, stores the result. The store is idempotent (`status <> 'done'` guards the write), so a
 * job that pg-boss retries after a worker died finishes exactly once.
 */
import { LockMode, type MikroORM } from '@mikro-orm/postgresql';
import type { AssessmentStatus } from '@emberline/shared';
import { EngineRefusal } from '@emberline/shared';
import type { FileStore } from '../imaging/file-store';
import { Assessment } from './assessment.entity';
import { gatherInputs, loadTaskInput } from './assessment-inputs';
import type { AssessmentPool } from './assessment-pool';
import { notifyProgress } from './assessment-progress';
import type { AssessmentJobData } from './assessment-queue';
import { toProgressEvent } from './assessment.service';
import type { AssessmentDisplayStore } from './assessment-display-store';

export interface ProcessorDependencies {
  orm: MikroORM;
  pool: AssessmentPool;
  labelMaps: FileStore;
  displays: AssessmentDisplayStore;
  retryLimit: number;
  log: (message: string, error?: unknown) => void;
}

/** Progress is written and pushed at most this often. */
const progressIntervalMs = 250;

export function assessmentProcessor(dependencies: ProcessorDependencies) {
  const { orm, pool, log } = dependencies;

  return async function process(
    data: AssessmentJobData,
    job: { id: string; retryCount: number },
  ): Promise<void> {
    const em = orm.em.fork();
    const assessment = await em.findOne(
      Assessment,
      { id: data.assessmentId },
      { populate: ['plan', 'plan.series', 'safetyProfile'] },
    );
    // Deleted with its plan, or already finished by an earlier attempt: nothing to do.
    if (!assessment || assessment.status === 'done' || assessment.status === 'failed') return;
    assessment.status = 'running';
    assessment.attempts += 1;
    assessment.progress = 0;
    assessment.jobId = job.id;
    await em.flush();
    await notifyProgress(em, toProgressEvent(assessment, 'Starting'));

    try {
      const plan = assessment.plan.getEntity();
      const gathered = await gatherInputs(
        em,
        plan,
        assessment.safetyProfile.getEntity(),
        assessment.engineVersion,
        true,
      );
      const { input, transfer } = await loadTaskInput(gathered.task, dependencies.labelMaps);
      let lastSentAt = 0;
      let pending: Promise<unknown> = Promise.resolve();
      const output = await pool.run(input, transfer, (progress) => {
        const now = Date.now();
        if (now - lastSentAt < progressIntervalMs) return;
        lastSentAt = now;
        pending = pending.then(() =>
          saveProgress(orm, assessment.id, progress.fraction, progress.stage).catch(
            (error: unknown) => log('Assessment progress was not saved.', error),
          ),
        );
      });
      await pending;
      if (output.display) await dependencies.displays.write(assessment.id, output.display);
      await finish(orm, assessment.id, 'done', { result: output.result });
    } catch (error) {
      const isRefusal = error instanceof EngineRefusal;
      const isLastAttempt = job.retryCount >= dependencies.retryLimit;
      if (isRefusal || isLastAttempt) {
        const message = isRefusal
          ? (error as Error).message
          : 'The assessment failed; the team has been notified in the server log.';
        if (!isRefusal) log(`Assessment ${assessment.id} failed.`, error);
        await finish(orm, assessment.id, 'failed', { error: message });
        return;
      }
      log(`Assessment ${assessment.id} failed on attempt ${assessment.attempts}; retrying.`, error);
      await requeue(orm, assessment.id);
      throw error;
    }
  };
}

async function saveProgress(
  orm: MikroORM,
  id: string,
  fraction: number,
  stage: string,
): Promise<void> {
  const em = orm.em.fork();
  const assessment = await em.findOne(Assessment, { id, status: 'running' });
  if (!assessment) return;
  assessment.progress = Math.min(0.99, Math.max(assessment.progress, fraction));
  await em.flush();
  await notifyProgress(em, toProgressEvent(assessment, stage));
}

async function finish(
  orm: MikroORM,
  id: string,
  status: Extract<AssessmentStatus, 'done' | 'failed'>,
  outcome: { result?: Assessment['result']; error?: string },
): Promise<void> {
  const em = orm.em.fork();
  await em.transactional(async (tx) => {
    // The guard that makes a retried job finish once: only an unfinished row is written.
    const assessment = await tx.findOne(
      Assessment,
      { id, status: { $nin: ['done', 'failed'] } },
      { lockMode: LockMode.PESSIMISTIC_WRITE, populate: ['plan'] },
    );
    if (!assessment) return;
    assessment.status = status;
    assessment.progress = 1;
    assessment.result = outcome.result ?? null;
    assessment.error = outcome.error ?? null;
    const plan = assessment.plan.getEntity();
    if (
      plan.status === 'draft' ||
      plan.status === 'submitted' ||
      plan.status === 'assessment-failed'
    ) {
      plan.status = status === 'done' ? 'assessed' : 'assessment-failed';
    }
    await tx.flush();
    await notifyProgress(tx, toProgressEvent(assessment));
  });
}

async function requeue(orm: MikroORM, id: string): Promise<void> {
  const em = orm.em.fork();
  const assessment = await em.findOne(Assessment, { id, status: 'running' });
  if (!assessment) return;
  assessment.status = 'queued';
  await em.flush();
  await notifyProgress(em, toProgressEvent(assessment, 'Retrying'));
}
