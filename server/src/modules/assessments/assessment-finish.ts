/**
 * The one place an assessment ends. The row is locked and written only while it is still
 * active, so a job that two workers ran (one presumed dead), or a worker and the reaper, end it
 * once. A failure sends the plan back to be revised and assessed again.
 */
import { LockMode, type MikroORM } from '@mikro-orm/postgresql';
import type { AssessmentStatus } from '@emberline/shared';
import { Assessment } from './assessment.entity';
import { notifyProgress } from './assessment-progress';
import { toProgressEvent } from './assessment.service';

/** Returns whether this call ended it (false: it had ended already, or is gone). */
export async function finishAssessment(
  orm: MikroORM,
  id: string,
  status: Extract<AssessmentStatus, 'done' | 'failed'>,
  outcome: { result?: Assessment['result']; error?: string },
): Promise<boolean> {
  const em = orm.em.fork();
  return em.transactional(async (tx) => {
    const assessment = await tx.findOne(
      Assessment,
      { id, status: { $nin: ['done', 'failed'] } },
      { lockMode: LockMode.PESSIMISTIC_WRITE, populate: ['plan'] },
    );
    if (!assessment) return false;
    assessment.status = status;
    assessment.progress = 1;
    assessment.result = outcome.result ?? null;
    assessment.error = outcome.error ?? null;
    const plan = assessment.plan.getEntity();
    if (
      plan.status === 'draft' ||
      plan.status === 'submitted' ||
      plan.status === 'assessment-failed' ||
      (plan.status === 'assessed' && status === 'done')
    ) {
      plan.status = status === 'done' ? 'assessed' : 'assessment-failed';
    }
    await tx.flush();
    await notifyProgress(tx, toProgressEvent(assessment));
    return true;
  });
}
