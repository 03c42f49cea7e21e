import type { EntityManager } from '@mikro-orm/postgresql';
import {
  ENGINE_VERSION,
  type AssessmentProgressEvent,
  type AssessmentView,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { AppError, ForbiddenError, NotFoundError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { visibilityFilter } from '../cases/case.service';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { SafetyProfile } from '../plans/safety-profile.entity';
import { User } from '../users/user.entity';
import { Assessment } from './assessment.entity';
import { gatherInputs } from './assessment-inputs';
import type { AssessmentQueue } from './assessment-queue';

export class QueueUnavailableError extends AppError {
  constructor() {
    super(503, 'Service unavailable', 'The assessment queue is not running; try again shortly.');
  }
}

export function toAssessmentView(assessment: Assessment): AssessmentView {
  return {
    id: assessment.id,
    planId: assessment.plan.id,
    status: assessment.status,
    progress: assessment.progress,
    ...(assessment.result ? { result: assessment.result } : {}),
    ...(assessment.error ? { error: assessment.error } : {}),
    createdAt: assessment.createdAt.toISOString(),
    updatedAt: assessment.updatedAt.toISOString(),
  };
}

export function toProgressEvent(assessment: Assessment, stage?: string): AssessmentProgressEvent {
  return {
    id: assessment.id,
    planId: assessment.plan.id,
    status: assessment.status,
    progress: assessment.progress,
    ...(stage ? { stage } : {}),
    ...(assessment.error ? { error: assessment.error } : {}),
  };
}

/**
 * Assessment rules: the presenting physician of the case requests one (DESIGN.md §2); anyone
 * who may see the case reads them. An unchanged plan (same inputs hash) reuses the assessment
 * already done or under way instead of queueing another.
 */
export class AssessmentService {
  constructor(
    private readonly em: EntityManager,
    private readonly queue: AssessmentQueue | null,
    private readonly isBioheatRequested: boolean,
  ) {}

  async request(user: SignedInUser, actor: Actor, planId: string): Promise<AssessmentView> {
    const plan = await this.findVisiblePlan(user, planId);
    const clinicalCase = plan.clinicalCase.getEntity();
    if (!hasRole(user, 'presenting-physician') || clinicalCase.presenter.id !== user.id) {
      throw new ForbiddenError('Only the presenting physician of the case requests assessments.');
    }
    if (plan.status === 'selected' || plan.status === 'set-aside') {
      throw new AppError(
        409,
        'Conflict',
        'A plan the board has selected or set aside is not assessed again.',
      );
    }
    const safetyProfile = await this.em.findOne(SafetyProfile, { isDefault: true });
    if (!safetyProfile) {
      throw new AppError(
        409,
        'Conflict',
        'No default safety profile is set; an administrator must choose one first.',
      );
    }
    const { hash } = await gatherInputs(
      this.em,
      plan,
      safetyProfile,
      ENGINE_VERSION,
      this.isBioheatRequested,
    );
    const reusable = await this.em.findOne(
      Assessment,
      { plan: plan.id, inputsHash: hash, status: { $in: ['queued', 'running', 'done'] } },
      { orderBy: { createdAt: 'desc' } },
    );
    if (reusable) {
      recordAudit(this.em, actor, {
        action: 'assessment.request',
        entityType: 'assessment',
        entityId: reusable.id,
        detail: { planId: plan.id, reused: true },
      });
      await this.em.flush();
      return toAssessmentView(reusable);
    }
    if (!this.queue) throw new QueueUnavailableError();
    const assessment = new Assessment({
      plan: this.em.getReference(NeedlePlan, plan.id, { wrapped: true }),
      inputsHash: hash,
      engineVersion: ENGINE_VERSION,
      requestedBy: this.em.getReference(User, user.id, { wrapped: true }),
      safetyProfile: this.em.getReference(SafetyProfile, safetyProfile.id, { wrapped: true }),
    });
    this.em.persist(assessment);
    if (plan.status === 'draft' || plan.status === 'assessment-failed') plan.status = 'submitted';
    recordAudit(this.em, actor, {
      action: 'assessment.request',
      entityType: 'assessment',
      entityId: assessment.id,
      detail: { planId: plan.id, reused: false },
    });
    await this.em.flush();
    assessment.jobId = await this.queue.send({ assessmentId: assessment.id });
    await this.em.flush();
    return toAssessmentView(assessment);
  }

  async get(user: SignedInUser, actor: Actor, id: string): Promise<AssessmentView> {
    const assessment = await this.findVisible(user, id);
    recordAudit(this.em, actor, {
      action: 'assessment.read',
      entityType: 'assessment',
      entityId: assessment.id,
    });
    await this.em.flush();
    return toAssessmentView(assessment);
  }

  /** The plan's assessments, newest first. */
  async listForPlan(user: SignedInUser, actor: Actor, planId: string): Promise<AssessmentView[]> {
    const plan = await this.findVisiblePlan(user, planId);
    const found = await this.em.find(
      Assessment,
      { plan: plan.id },
      { orderBy: { createdAt: 'desc' }, limit: 20 },
    );
    recordAudit(this.em, actor, {
      action: 'assessment.read',
      entityType: 'plan',
      entityId: plan.id,
      detail: { count: found.length },
    });
    await this.em.flush();
    return found.map(toAssessmentView);
  }

  /** The live state for a socket that asks to watch (no audit: the HTTP read is audited). */
  async progressFor(user: SignedInUser, id: string): Promise<AssessmentProgressEvent> {
    return toProgressEvent(await this.findVisible(user, id));
  }

  private async findVisiblePlan(user: SignedInUser, planId: string): Promise<NeedlePlan> {
    const plan = await this.em.findOne(
      NeedlePlan,
      { id: planId, clinicalCase: visibilityFilter(user) },
      { populate: ['clinicalCase', 'series'] },
    );
    if (!plan) throw new NotFoundError('The plan');
    return plan;
  }

  private async findVisible(user: SignedInUser, id: string): Promise<Assessment> {
    const assessment = await this.em.findOne(Assessment, {
      id,
      plan: { clinicalCase: visibilityFilter(user) },
    });
    if (!assessment) throw new NotFoundError('The assessment');
    return assessment;
  }
}
