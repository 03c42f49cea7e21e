import type { EntityManager } from '@mikro-orm/postgresql';
import type { CreatePlan, PlanView, UpdatePlan } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit, writeAudit } from '../audit/audit.service';
import { ClinicalCase } from '../cases/case.entity';
import { assertCaseOpenForChanges } from '../cases/case-open-for-changes';
import { ImageSeries } from '../imaging/image-series.entity';
import { User } from '../users/user.entity';
import { ApplicatorProfile } from './applicator-profile.entity';
import { NeedlePlan, type StoredApplicator } from './needle-plan.entity';

/**
 * Needle plan rules (DEVELOPERS.md, "Roles"): a plan is seen by whoever sees its case (404 for
 * anyone else, exactly as the case); the case's presenting physician drafts plans; a draft is
 * changed or deleted by its author or the case's presenter (403 for anyone else who sees it)
 * and, once submitted, by nobody here (409). Each applicator names a profile that exists and
 * is not retired, with a power and a time within the range of that profile's zone table.
 */
export class PlanService {
  constructor(private readonly em: EntityManager) {}

  async list(user: SignedInUser, actor: Actor, caseId: string): Promise<PlanView[]> {
    const found = await this.findVisibleCase(user, caseId);
    const plans = await this.em.find(
      NeedlePlan,
      { clinicalCase: found.id },
      { orderBy: { createdAt: 'asc', id: 'asc' }, populate: ['author'] },
    );
    await writeAudit(this.em, actor, {
      action: 'plans.list',
      entityType: 'case',
      entityId: found.id,
      detail: { planCount: plans.length },
    });
    return this.toViews(plans);
  }

  async get(user: SignedInUser, actor: Actor, planId: string): Promise<PlanView> {
    const plan = await this.findVisiblePlan(user, planId);
    await writeAudit(this.em, actor, {
      action: 'plan.read',
      entityType: 'plan',
      entityId: plan.id,
      detail: { caseId: plan.clinicalCase.id },
    });
    return (await this.toViews([plan]))[0];
  }

  async create(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: CreatePlan,
  ): Promise<PlanView> {
    const found = await this.findVisibleCase(user, caseId);
    if (!isPresenterOf(user, found)) {
      throw new ForbiddenError('Only the presenting physician of this case drafts its plans.');
    }
    assertCaseOpenForChanges(found);
    const series = await this.em.findOne(ImageSeries, {
      id: body.seriesId,
      clinicalCase: found.id,
    });
    if (!series) {
      const message = 'The series is not one of this case’s series.';
      throw new ValidationError(`seriesId: ${message}`, [{ path: 'seriesId', message }]);
    }
    await this.assertApplicators(body.applicators);
    const plan = new NeedlePlan({
      clinicalCase: this.em.getReference(ClinicalCase, found.id, { wrapped: true }),
      series: this.em.getReference(ImageSeries, series.id, { wrapped: true }),
      author: this.em.getReference(User, user.id, { wrapped: true }),
      name: body.name,
      applicators: body.applicators.map(storedApplicator),
    });
    plan.notes = body.notes ?? null;
    this.em.persist(plan);
    recordAudit(this.em, actor, {
      action: 'plan.create',
      entityType: 'plan',
      entityId: plan.id,
      detail: { caseId: found.id, seriesId: series.id, applicatorCount: plan.applicators.length },
    });
    await this.em.flush();
    return (await this.toViews([plan]))[0];
  }

  async update(
    user: SignedInUser,
    actor: Actor,
    planId: string,
    body: UpdatePlan,
  ): Promise<PlanView> {
    const plan = await this.findDraftToChange(user, planId, 'changed');
    if (body.applicators) {
      await this.assertApplicators(body.applicators);
      plan.applicators = body.applicators.map(storedApplicator);
    }
    if (body.name !== undefined) plan.name = body.name;
    if (body.notes !== undefined) plan.notes = body.notes;
    if (body.status !== undefined) plan.status = body.status;
    else if (plan.status === 'assessment-failed') plan.status = 'draft';
    const fields = Object.keys(body)
      .filter((key) => body[key as keyof UpdatePlan] !== undefined)
      .sort();
    recordAudit(this.em, actor, {
      action: 'plan.update',
      entityType: 'plan',
      entityId: plan.id,
      detail: { caseId: plan.clinicalCase.id, fields, status: plan.status },
    });
    await this.em.flush();
    return (await this.toViews([plan]))[0];
  }

  /**
   * A new draft from a plan (submitted, assessed, failed or a draft): same series, applicators
   * and profiles, its name suffixed, so that an assessed plan can be revised without touching
   * the plan its assessment belongs to.
   */
  async copyAsDraft(user: SignedInUser, actor: Actor, planId: string): Promise<PlanView> {
    const source = await this.findVisiblePlan(user, planId);
    const found = source.clinicalCase.getEntity();
    if (!isPresenterOf(user, found)) {
      throw new ForbiddenError('Only the presenting physician of this case drafts its plans.');
    }
    assertCaseOpenForChanges(found);
    const siblings = await this.em.find(
      NeedlePlan,
      { clinicalCase: found.id },
      { fields: ['name'] },
    );
    const copy = new NeedlePlan({
      clinicalCase: this.em.getReference(ClinicalCase, found.id, { wrapped: true }),
      series: this.em.getReference(ImageSeries, source.series.id, { wrapped: true }),
      author: this.em.getReference(User, user.id, { wrapped: true }),
      name: revisedName(source.name, new Set(siblings.map((plan) => plan.name))),
      applicators: source.applicators.map((applicator) => ({ ...applicator })),
    });
    copy.notes = source.notes;
    this.em.persist(copy);
    recordAudit(this.em, actor, {
      action: 'plan.copy',
      entityType: 'plan',
      entityId: copy.id,
      detail: { caseId: found.id, fromPlanId: source.id },
    });
    await this.em.flush();
    return (await this.toViews([copy]))[0];
  }

  async remove(user: SignedInUser, actor: Actor, planId: string): Promise<void> {
    const plan = await this.findDraftToChange(user, planId, 'deleted');
    this.em.remove(plan);
    recordAudit(this.em, actor, {
      action: 'plan.delete',
      entityType: 'plan',
      entityId: plan.id,
      detail: { caseId: plan.clinicalCase.id },
    });
    await this.em.flush();
  }

  /**
   * Every applicator's profile exists and is not retired, and its power and time lie within
   * the profile's zone table (between its smallest and largest power, and time). All the
   * faults at once, each naming its field (`applicators.N.powerW`).
   */
  private async assertApplicators(applicators: CreatePlan['applicators']): Promise<void> {
    const ids = [...new Set(applicators.map((applicator) => applicator.profileId))];
    const profiles = new Map(
      (await this.em.find(ApplicatorProfile, { id: { $in: ids } })).map((p) => [p.id, p]),
    );
    const errors: { path: string; message: string }[] = [];
    applicators.forEach((applicator, index) => {
      const at = `applicators.${index}`;
      const profile = profiles.get(applicator.profileId);
      if (!profile) {
        errors.push({
          path: `${at}.profileId`,
          message: 'No applicator profile has this id.',
        });
        return;
      }
      if (profile.isRetired) {
        errors.push({
          path: `${at}.profileId`,
          message: `The applicator profile "${profile.name}" is retired; choose another.`,
        });
        return;
      }
      const powers = profile.zoneTable.map((row) => row.powerW);
      const times = profile.zoneTable.map((row) => row.timeS);
      const [minimumPowerW, maximumPowerW] = [Math.min(...powers), Math.max(...powers)];
      const [minimumTimeS, maximumTimeS] = [Math.min(...times), Math.max(...times)];
      if (applicator.powerW < minimumPowerW || applicator.powerW > maximumPowerW) {
        errors.push({
          path: `${at}.powerW`,
          message:
            `${applicator.powerW} W lies outside the zone table of "${profile.name}" ` +
            `(${minimumPowerW}–${maximumPowerW} W).`,
        });
      }
      if (applicator.timeS < minimumTimeS || applicator.timeS > maximumTimeS) {
        errors.push({
          path: `${at}.timeS`,
          message:
            `${applicator.timeS} s lies outside the zone table of "${profile.name}" ` +
            `(${minimumTimeS}–${maximumTimeS} s).`,
        });
      }
    });
    const [first] = errors;
    if (first) throw new ValidationError(`${first.path}: ${first.message}`, errors);
  }

  private findVisibleCase(user: SignedInUser, caseId: string): Promise<ClinicalCase> {
    return this.em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId);
  }

  private findVisiblePlan(user: SignedInUser, planId: string): Promise<NeedlePlan> {
    return this.em
      .getRepository(NeedlePlan)
      .findVisibleOrFail(user, planId, ['clinicalCase', 'author']);
  }

  private async findDraftToChange(
    user: SignedInUser,
    planId: string,
    change: 'changed' | 'deleted',
  ): Promise<NeedlePlan> {
    const plan = await this.findVisiblePlan(user, planId);
    const found = plan.clinicalCase.getEntity();
    const isAuthor = plan.author.id === user.id;
    if (!hasRole(user, 'presenting-physician') || !(isAuthor || found.presenter.id === user.id)) {
      throw new ForbiddenError(
        `Only the plan's author or the case's presenting physician may have it ${change}.`,
      );
    }
    assertCaseOpenForChanges(found);
    // A plan whose assessment failed is a draft again: it may be corrected and re-assessed.
    if (plan.status !== 'draft' && plan.status !== 'assessment-failed') {
      throw new ConflictError(
        `Only a draft plan can be ${change}; this plan is ${plan.status}. ` +
          'Copy it as a new draft to revise it.',
      );
    }
    return plan;
  }

  private async toViews(plans: NeedlePlan[]): Promise<PlanView[]> {
    await this.em.populate(plans, ['author']);
    const ids = [...new Set(plans.flatMap((plan) => plan.applicators.map((a) => a.profileId)))];
    const names = new Map(
      ids.length
        ? (await this.em.find(ApplicatorProfile, { id: { $in: ids } })).map((p) => [p.id, p.name])
        : [],
    );
    return plans.map((plan) => {
      const author = plan.author.getEntity();
      return {
        id: plan.id,
        caseId: plan.clinicalCase.id,
        seriesId: plan.series.id,
        name: plan.name,
        status: plan.status,
        applicators: plan.applicators.map((applicator) => ({
          ...applicator,
          profileName: names.get(applicator.profileId) ?? '',
        })),
        notes: plan.notes,
        author: { id: author.id, displayName: author.displayName },
        createdAt: plan.createdAt.toISOString(),
        updatedAt: plan.updatedAt.toISOString(),
      };
    });
  }
}

function isPresenterOf(user: SignedInUser, found: ClinicalCase): boolean {
  return hasRole(user, 'presenting-physician') && found.presenter.id === user.id;
}

const planNameLength = 80;

/** "Plan A" → "Plan A (revision 2)", then 3, … : the first name no plan of the case has. */
export function revisedName(name: string, taken: ReadonlySet<string>): string {
  const base = name.replace(/ \(revision \d+\)$/, '');
  for (let revision = 2; ; revision++) {
    const suffix = ` (revision ${revision})`;
    const candidate = base.slice(0, planNameLength - suffix.length) + suffix;
    if (!taken.has(candidate)) return candidate;
  }
}

function storedApplicator(applicator: CreatePlan['applicators'][number]): StoredApplicator {
  return {
    entry: applicator.entry,
    target: applicator.target,
    profileId: applicator.profileId,
    powerW: applicator.powerW,
    timeS: applicator.timeS,
  };
}
