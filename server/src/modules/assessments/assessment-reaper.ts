/**
 * The reaper: every server and worker process looks, every `ASSESSMENT_REAPER_SECONDS` (30),
 * for assessments left `queued` or `running` whose job is not where it should be, and settles
 * them so that no plan waits for ever:
 *
 * - no job under the row's job id (committed, then the send was lost): send it now;
 * - the job failed or was cancelled (its last retry died, e.g. a killed worker): the assessment
 *   fails with a reason the presenter reads, and the plan may be assessed again;
 * - the job completed but the row was never finished: fails likewise.
 *
 * Rows younger than the grace period are left alone (their request may still be sending).
 * Several processes may reap at once: each change is a guarded update of a still-active row.
 */
import type { MikroORM } from '@mikro-orm/postgresql';
import { Assessment } from './assessment.entity';
import type { AssessmentQueue } from './assessment-queue';
import { finishAssessment } from './assessment-finish';

export interface ReaperSettings {
  intervalSeconds: number;
  /** An active row younger than this is not touched. */
  graceSeconds: number;
}

export function reaperSettingsFromEnvironment(env = process.env): ReaperSettings {
  return {
    intervalSeconds: Number(env.ASSESSMENT_REAPER_SECONDS ?? 30),
    graceSeconds: Number(env.ASSESSMENT_REAPER_GRACE_SECONDS ?? 15),
  };
}

export const lostJobReason =
  'The assessment stopped before it finished (its worker was stopped or ran out of time on the ' +
  'last attempt). Nothing was stored; request the assessment again.';

/** One pass; returns what it did, for tests and logs. */
export async function reapAssessments(
  orm: MikroORM,
  queue: AssessmentQueue,
  settings: Pick<ReaperSettings, 'graceSeconds'>,
): Promise<{ resent: number; failed: number }> {
  const em = orm.em.fork();
  const before = new Date(Date.now() - settings.graceSeconds * 1000);
  const active = await em.find(
    Assessment,
    { status: { $in: ['queued', 'running'] }, updatedAt: { $lt: before } },
    { orderBy: { createdAt: 'asc' }, limit: 200 },
  );
  let resent = 0;
  let failed = 0;
  for (const assessment of active) {
    const jobId = assessment.jobId;
    const job = jobId ? await queue.jobState(jobId) : null;
    if (!job) {
      // Committed, never sent (or sent before job ids were kept): send it under its id.
      const id = jobId ?? assessment.id;
      if (!jobId) {
        assessment.jobId = id;
        await em.flush();
      }
      await queue.send({ assessmentId: assessment.id }, id);
      resent += 1;
      continue;
    }
    if (job.state === 'failed' || job.state === 'cancelled' || job.state === 'completed') {
      const isFinished = await finishAssessment(orm, assessment.id, 'failed', {
        error: lostJobReason,
      });
      if (isFinished) failed += 1;
    }
  }
  return { resent, failed };
}

/** Runs the reaper on a timer until stopped; a failing pass is logged, never thrown. */
export function startReaper(
  orm: MikroORM,
  queue: AssessmentQueue,
  settings: ReaperSettings,
  log: (message: string, error?: unknown) => void,
): { stop(): Promise<void> } {
  let running: Promise<unknown> = Promise.resolve();
  const timer = setInterval(() => {
    running = running
      .then(() => reapAssessments(orm, queue, settings))
      .then((outcome) => {
        if (outcome.resent || outcome.failed) {
          log(`Assessment reaper: ${outcome.resent} sent again, ${outcome.failed} failed.`);
        }
      })
      .catch((error: unknown) => log('The assessment reaper pass failed.', error));
  }, settings.intervalSeconds * 1000);
  timer.unref();
  return {
    async stop() {
      clearInterval(timer);
      await running;
    },
  };
}
