/**
 * Runs one queued assessment: marks it running, builds the engine's input from the frozen
 * snapshot (never from what the database holds now), runs the engine in the pool, stores the
 * result and any heating-model calibration the run had to fit. The result write is guarded
 * (`finishAssessment`), so a job that pg-boss retries after a worker died finishes exactly once.
 * The handler never throws but to ask pg-boss for a retry.
 */
import type { MikroORM } from '@mikro-orm/postgresql';
import {
  EngineRefusal,
  type ApplicatorCalibration,
  type AssessmentResult,
  type AssessmentSnapshot,
} from '@emberline/shared';
import type { FileStore } from '../imaging/file-store';
import { ApplicatorProfileVersion } from '../plans/applicator-profile-version.entity';
import { Assessment } from './assessment.entity';
import { finishAssessment } from './assessment-finish';
import type { AssessmentPool } from './assessment-pool';
import { notifyProgress } from './assessment-progress';
import type { AssessmentJobData } from './assessment-queue';
import { toProgressEvent } from './assessment.service';
import type { AssessmentDisplayStore } from './assessment-display-store';
import { taskInputFromSnapshot, LabelMapGoneError } from './assessment-task-input';

export interface ProcessorDependencies {
  orm: MikroORM;
  pool: AssessmentPool;
  labelMaps: FileStore;
  displays: AssessmentDisplayStore;
  retryLimit: number;
  log: (message: string, error?: unknown) => void;
}

const noSnapshotReason =
  'This assessment was requested before inputs were frozen with each assessment; request it again.';

/** Progress is written and pushed at most this often. */
const progressIntervalMs = 250;

export function assessmentProcessor(dependencies: ProcessorDependencies) {
  const { orm, pool, log } = dependencies;

  return async function process(
    data: AssessmentJobData,
    job: { id: string; retryCount: number },
  ): Promise<void> {
    const assessment = await start(orm, data.assessmentId, job.id).catch((error: unknown) => {
      log(`Assessment ${data.assessmentId} could not be started; retrying.`, error);
      throw error;
    });
    if (!assessment) return;
    const snapshot = assessment.snapshot;
    if (!snapshot) {
      await finishAssessment(orm, assessment.id, 'failed', { error: noSnapshotReason });
      return;
    }
    try {
      const storedCalibrations = await loadCalibrations(orm, snapshot);
      const { input, transfer } = await taskInputFromSnapshot(
        snapshot,
        dependencies.labelMaps,
        storedCalibrations,
      );
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
      await saveCalibrations(orm, snapshot, output.newCalibrations ?? []).catch((error: unknown) =>
        log('A fitted calibration was not stored.', error),
      );
      if (output.display) await dependencies.displays.write(assessment.id, output.display);
      if (output.replays?.length) {
        await dependencies.displays.writeReplays(assessment.id, output.replays);
      }
      await finishAssessment(orm, assessment.id, 'done', {
        result: withProfileVersions(output.result, snapshot),
      });
    } catch (error) {
      const isRefusal = error instanceof EngineRefusal || error instanceof LabelMapGoneError;
      const isLastAttempt = job.retryCount >= dependencies.retryLimit;
      if (isRefusal || isLastAttempt) {
        const message = isRefusal
          ? (error as Error).message
          : 'The assessment failed on every attempt; the details are in the server log. ' +
            'Request it again, or ask the team to look.';
        if (!isRefusal) log(`Assessment ${assessment.id} failed.`, error);
        await finishAssessment(orm, assessment.id, 'failed', { error: message }).catch(
          (finishError: unknown) => log(`Assessment ${assessment.id} was not ended.`, finishError),
        );
        return;
      }
      log(`Assessment ${assessment.id} failed on attempt ${assessment.attempts}; retrying.`, error);
      await requeue(orm, assessment.id).catch((requeueError: unknown) =>
        log(`Assessment ${assessment.id} was not put back in the queue.`, requeueError),
      );
      throw error;
    }
  };
}

/** Marks the row running; null when it was deleted with its plan or has ended already. */
async function start(orm: MikroORM, id: string, jobId: string): Promise<Assessment | null> {
  const em = orm.em.fork();
  const assessment = await em.findOne(Assessment, { id });
  if (!assessment || assessment.status === 'done' || assessment.status === 'failed') return null;
  assessment.status = 'running';
  assessment.attempts += 1;
  assessment.progress = 0;
  assessment.jobId = jobId;
  await em.flush();
  await notifyProgress(em, toProgressEvent(assessment, 'Starting'));
  return assessment;
}

/** The calibrations already fitted for the snapshot's profile versions, by profile id. */
async function loadCalibrations(
  orm: MikroORM,
  snapshot: AssessmentSnapshot,
): Promise<Map<string, ApplicatorCalibration>> {
  const em = orm.em.fork();
  const found = new Map<string, ApplicatorCalibration>();
  for (const profile of snapshot.applicatorProfiles) {
    const version = await em.findOne(ApplicatorProfileVersion, {
      profile: profile.id,
      version: profile.version,
    });
    if (version?.calibration) found.set(profile.id, version.calibration);
  }
  return found;
}

/**
 * Stores a calibration the run fitted on its profile version: where none is stored, or where
 * the stored one belongs to an earlier version of the heating model (the worker refits those).
 */
async function saveCalibrations(
  orm: MikroORM,
  snapshot: AssessmentSnapshot,
  fitted: readonly { profileId: string; calibration: ApplicatorCalibration }[],
): Promise<void> {
  const em = orm.em.fork();
  for (const { profileId, calibration } of fitted) {
    const profile = snapshot.applicatorProfiles.find((item) => item.id === profileId);
    if (!profile) continue;
    const version = await em.findOne(ApplicatorProfileVersion, {
      profile: profileId,
      version: profile.version,
    });
    if (!version) continue;
    if (version.calibration?.modelVersion === calibration.modelVersion) continue;
    version.calibration = calibration;
  }
  await em.flush();
}

/** The result with each calibration named by the profile version it was fitted to. */
function withProfileVersions(
  result: AssessmentResult,
  snapshot: AssessmentSnapshot,
): AssessmentResult {
  if (!result.calibrations) return result;
  return {
    ...result,
    calibrations: result.calibrations.map((calibration) => {
      const profile = snapshot.applicatorProfiles.find((item) => item.id === calibration.profileId);
      return profile
        ? { ...calibration, profileVersion: profile.version, profileName: profile.name }
        : calibration;
    }),
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

async function requeue(orm: MikroORM, id: string): Promise<void> {
  const em = orm.em.fork();
  const assessment = await em.findOne(Assessment, { id, status: 'running' });
  if (!assessment) return;
  assessment.status = 'queued';
  await em.flush();
  await notifyProgress(em, toProgressEvent(assessment, 'Retrying'));
}
