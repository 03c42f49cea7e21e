import type { EntityManager } from '@mikro-orm/postgresql';
import type { Actor } from '../src/common/request-context';
import { AssessmentService } from '../src/modules/assessments/assessment.service';
import type { AssessmentQueue } from '../src/modules/assessments/assessment-queue';
import { ClinicalCase } from '../src/modules/cases/case.entity';
import { NeedlePlan } from '../src/modules/plans/needle-plan.entity';
import { loadSignedInUser } from '../src/modules/users/user.service';
import { demoImagingCaseCode } from './demo-imaging';

/**
 * Queues an assessment of every demo plan, as the case's presenter would, so that the plan
 * comparison has figures on the demo's first start (the server works the jobs once it runs).
 * Answers how many were queued.
 */
export async function queueDemoAssessments(
  em: EntityManager,
  queue: AssessmentQueue,
): Promise<number> {
  const found = await em.fork().findOne(ClinicalCase, { caseCode: demoImagingCaseCode });
  if (!found) return 0;
  const presenter = await loadSignedInUser(em.fork(), found.presenter.id, 'local');
  if (!presenter) throw new Error('the demo case has no active presenter');
  const actor: Actor = { id: presenter.id, email: presenter.email, ip: null };
  const plans = await em
    .fork()
    .find(NeedlePlan, { clinicalCase: found.id }, { orderBy: { createdAt: 'asc' } });
  for (const plan of plans) {
    await new AssessmentService(em.fork(), queue, true).request(presenter, actor, plan.id);
  }
  return plans.length;
}
