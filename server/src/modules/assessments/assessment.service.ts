import { randomUUID } from 'node:crypto';
import { UniqueConstraintViolationException } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import {
  ENGINE_VERSION,
  DEFAULT_REHEARSAL_SETTINGS,
  snapshotChanges,
  type AssessmentInputsView,
  type AssessmentProgressEvent,
  type AssessmentSnapshot,
  type AssessmentView,
  type InputChange,
  type RequestAssessment,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { AppError, ConflictError, ForbiddenError, NotFoundError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { ClinicalCase } from '../cases/case.entity';
import { visibilityFilter } from '../cases/case-visibility';
import { assertCaseOpenForChanges } from '../cases/case-open-for-changes';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { SafetyProfile } from '../plans/safety-profile.entity';
import { User } from '../users/user.entity';
import { Assessment } from './assessment.entity';
import { freezeProfileVersions, takeSnapshot } from './assessment-snapshot';
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
    inputs: assessment.snapshot ? inputsView(assessment.snapshot) : null,
    ...(assessment.result ? { result: assessment.result } : {}),
    ...(assessment.error ? { error: assessment.error } : {}),
    createdAt: assessment.createdAt.toISOString(),
    updatedAt: assessment.updatedAt.toISOString(),
  };
}

function inputsView(snapshot: AssessmentSnapshot): AssessmentInputsView {
  return {
    safetyProfile: {
      id: snapshot.safetyProfile.id,
      name: snapshot.safetyProfile.body.name,
      version: snapshot.safetyProfile.version,
      minimumClearanceMm: Object.fromEntries(
        snapshot.safetyProfile.body.structureRules
          .filter((rule) => rule.minimumClearanceMm > 0)
          .map((rule) => [rule.kind, rule.minimumClearanceMm]),
      ),
      marginTargetMm: snapshot.safetyProfile.body.marginTargetMm,
      marginMinimumMm: snapshot.safetyProfile.body.marginMinimumMm,
      // Snapshots taken before the rehearsal existed have no tolerance: the key is then left out.
      ...(typeof snapshot.safetyProfile.body.rehearsalToleranceMm === 'number'
        ? { rehearsalToleranceMm: snapshot.safetyProfile.body.rehearsalToleranceMm }
        : {}),
    },
    applicatorProfiles: snapshot.applicatorProfiles.map((profile) => ({
      id: profile.id,
      name: profile.name,
      version: profile.version,
      zoneTableSource: profile.zoneTableSource,
      zoneTableReference: profile.zoneTableReference,
    })),
    engineVersion: snapshot.engineVersion,
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
 * Assessment rules: the presenting physician of the case requests one; anyone who may see the
 * case reads them. A request freezes the plan's inputs in a snapshot; an identical snapshot
 * reuses the assessment already done or under way instead of queueing another, and a failed
 * one never blocks a new request.
 */
export class AssessmentService {
  constructor(
    private readonly em: EntityManager,
    private readonly queue: AssessmentQueue | null,
    private readonly isBioheatRequested: boolean,
    private readonly log: (message: string, error?: unknown) => void = () => undefined,
  ) {}

  async request(
    user: SignedInUser,
    actor: Actor,
    planId: string,
    body: RequestAssessment = {},
  ): Promise<AssessmentView> {
    const plan = await this.findVisiblePlan(user, planId);
    const clinicalCase = plan.clinicalCase.getEntity();
    if (!hasRole(user, 'presenting-physician') || clinicalCase.presenter.id !== user.id) {
      throw new ForbiddenError('Only the presenting physician of the case requests assessments.');
    }
    assertCaseOpenForChanges(clinicalCase);
    if (plan.status === 'selected' || plan.status === 'set-aside') {
      throw new ConflictError('A plan the board has selected or set aside is not assessed again.');
    }
    const safetyProfile = await this.safetyProfileFor(body.safetyProfileId);
    const { snapshot, hash } = await takeSnapshot(
      this.em,
      plan,
      safetyProfile,
      ENGINE_VERSION,
      this.isBioheatRequested,
      body.rehearsal === false ? null : (clinicalCase.rehearsal ?? DEFAULT_REHEARSAL_SETTINGS),
    );
    const reusable = await this.findReusable(plan.id, hash);
    if (reusable) return this.answerReused(actor, plan.id, reusable);
    if (!this.queue) throw new QueueUnavailableError();

    let assessment: Assessment;
    try {
      assessment = await this.em.transactional(async (em) => {
        await freezeProfileVersions(em, snapshot);
        const created = new Assessment({
          plan: em.getReference(NeedlePlan, plan.id, { wrapped: true }),
          inputsHash: hash,
          engineVersion: ENGINE_VERSION,
          requestedBy: em.getReference(User, user.id, { wrapped: true }),
          safetyProfile: em.getReference(SafetyProfile, safetyProfile.id, { wrapped: true }),
          snapshot,
        });
        // The row is the outbox: it carries its job id before the job exists, so the reaper
        // can send whatever a crash between commit and send left behind.
        created.jobId = randomUUID();
        em.persist(created);
        const lockedPlan = await em.findOneOrFail(NeedlePlan, plan.id);
        if (lockedPlan.status === 'draft' || lockedPlan.status === 'assessment-failed') {
          lockedPlan.status = 'submitted';
        }
        recordAudit(em, actor, {
          action: 'assessment.request',
          entityType: 'assessment',
          entityId: created.id,
          detail: { planId: plan.id, reused: false },
        });
        return created;
      });
    } catch (error) {
      // A concurrent request for the same snapshot won the partial unique index: answer its row.
      if (!(error instanceof UniqueConstraintViolationException)) throw error;
      this.em.clear();
      const winner = await this.findReusable(plan.id, hash);
      if (!winner) throw error;
      return this.answerReused(actor, plan.id, winner);
    }
    try {
      await this.queue.send({ assessmentId: assessment.id }, assessment.jobId as string);
    } catch (error) {
      // Committed but not sent: the reaper sends it on its next pass.
      this.log(`Assessment ${assessment.id} was stored but its job was not sent yet.`, error);
    }
    return toAssessmentView(assessment);
  }

  /**
   * What changed since the plan's newest assessment: its snapshot against the inputs the plan
   * would be assessed on today (with the same safety profile). Empty when nothing did.
   */
  async inputChangesFor(assessment: Assessment): Promise<InputChange[]> {
    const assessed = assessment.snapshot;
    if (!assessed) {
      return [
        {
          kind: 'engine',
          message: 'This assessment was stored before inputs were frozen with each assessment.',
        },
      ];
    }
    const plan = await this.em.findOne(NeedlePlan, assessment.plan.id, { populate: ['series'] });
    const safetyProfile = await this.em.findOne(SafetyProfile, assessed.safetyProfile.id);
    if (!plan || !safetyProfile) return [];
    try {
      const clinicalCase = await this.em.findOneOrFail(ClinicalCase, plan.clinicalCase.id);
      const { snapshot } = await takeSnapshot(
        this.em,
        plan,
        safetyProfile,
        ENGINE_VERSION,
        this.isBioheatRequested,
        assessed.rehearsal === null ? null : (clinicalCase.rehearsal ?? DEFAULT_REHEARSAL_SETTINGS),
      );
      return snapshotChanges(assessed, snapshot);
    } catch (error) {
      if (error instanceof AppError) {
        return [{ kind: 'label-map', message: error.message }];
      }
      throw error;
    }
  }

  private async safetyProfileFor(id: string | undefined): Promise<SafetyProfile> {
    if (id) {
      const chosen = await this.em.findOne(SafetyProfile, id);
      if (!chosen) throw new NotFoundError('The safety profile');
      return chosen;
    }
    const fallback = await this.em.findOne(SafetyProfile, { isDefault: true });
    if (!fallback) {
      throw new ConflictError(
        'No default safety profile is set; an administrator must choose one first.',
      );
    }
    return fallback;
  }

  private findReusable(planId: string, hash: string): Promise<Assessment | null> {
    return this.em.findOne(
      Assessment,
      { plan: planId, inputsHash: hash, status: { $in: ['queued', 'running', 'done'] } },
      { orderBy: { createdAt: 'desc' } },
    );
  }

  private async answerReused(
    actor: Actor,
    planId: string,
    reused: Assessment,
  ): Promise<AssessmentView> {
    recordAudit(this.em, actor, {
      action: 'assessment.request',
      entityType: 'assessment',
      entityId: reused.id,
      detail: { planId, reused: true },
    });
    await this.em.flush();
    return toAssessmentView(reused);
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
    const views = found.map(toAssessmentView);
    if (found[0]) {
      const changes = await this.inputChangesFor(found[0]);
      if (changes.length) views[0] = { ...views[0], inputChanges: changes };
    }
    return views;
  }

  /** The live state for a socket that asks to watch (no audit: the HTTP read is audited). */
  async progressFor(user: SignedInUser, id: string): Promise<AssessmentProgressEvent> {
    return toProgressEvent(await this.findVisible(user, id));
  }

  private findVisiblePlan(user: SignedInUser, planId: string): Promise<NeedlePlan> {
    return this.em
      .getRepository(NeedlePlan)
      .findVisibleOrFail(user, planId, ['clinicalCase', 'series']);
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
