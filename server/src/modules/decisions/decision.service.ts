import { LockMode } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import {
  ablationTreatments,
  type AmendDecision,
  type DecisionView,
  type QuorumView,
  type RecordDecision,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit, writeAudit } from '../audit/audit.service';
import type { BoardRoom } from '../board-session/board-room';
import { presenceOf } from '../board-session/presence';
import { ClinicalCase } from '../cases/case.entity';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { Meeting } from '../meetings/meeting.entity';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { User } from '../users/user.entity';
import { DecisionAmendment } from './decision-amendment.entity';
import { Decision } from './decision.entity';
import { loadDecisionViews } from './decision-view';
import { confirmSigner, type SignerCredentials } from './signature-check';

/** Plans still in play when the board decides: every one but the selected is set aside. */
const setAsideStatuses = ['draft', 'submitted', 'assessed', 'assessment-failed'] as const;

/**
 * The board's signed decision (module README): recorded once per case by a proceduralist of the
 * case's board while the case is on an open agenda item of a meeting that has not closed, with
 * quorum or the chair's stated reason for going without, and the signer re-authenticated. It
 * closes the item, decides the case, selects the plan and sets the others aside in one
 * transaction, then tells the meeting's room. Never edited: amendments are appended.
 */
export class DecisionService {
  constructor(
    private readonly em: EntityManager,
    private readonly room: BoardRoom,
  ) {}

  async get(user: SignedInUser, actor: Actor, caseId: string): Promise<DecisionView> {
    const found = await this.em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId);
    const [view] = await loadDecisionViews(this.em, { clinicalCase: found.id });
    if (!view) throw new NotFoundError('The decision');
    await writeAudit(this.em, actor, {
      action: 'decision.read',
      entityType: 'case',
      entityId: found.id,
      detail: { decisionId: view.id },
    });
    return view;
  }

  async record(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: RecordDecision,
    credentials: SignerCredentials,
  ): Promise<DecisionView> {
    const found = await this.findSignable(user, caseId, 'records the board’s decision');
    if (await this.em.count(Decision, { clinicalCase: found.id })) {
      throw new ConflictError(
        'The case is decided already. Record a correction as an amendment to the decision.',
      );
    }
    if (found.status !== 'on-agenda') {
      throw new ConflictError(
        `A decision is recorded for a case on a meeting’s agenda; this one is ${found.status}.`,
      );
    }
    const item = await this.em.findOne(
      AgendaItem,
      { clinicalCase: found.id, closedAt: null, meeting: { state: { $ne: 'closed' } } },
      { populate: ['meeting'] },
    );
    if (!item) {
      throw new ConflictError(
        'The case is on no open agenda item of a meeting that is still open.',
      );
    }
    const meeting = item.meeting.getEntity();
    if (body.planId) await this.assertSelectablePlan(found.id, body);

    // Asked before the transaction: the room may span other server processes.
    const { quorum } = await presenceOf(this.em, this.room, meeting.id);
    const overrideReason = this.quorumOverride(user, meeting, quorum, body);
    const signInMethod = await confirmSigner(this.em, user, actor, credentials, {
      action: 'sign',
      caseId: found.id,
    });

    const decisionId = await this.em.transactional(async (em) => {
      // Meeting, then item, then case: the order every board-session write takes its locks in.
      const lockedMeeting = await em.findOneOrFail(Meeting, meeting.id, {
        lockMode: LockMode.PESSIMISTIC_READ,
        refresh: true,
      });
      const lockedItem = await em.findOneOrFail(AgendaItem, item.id, {
        lockMode: LockMode.PESSIMISTIC_WRITE,
        refresh: true,
      });
      const lockedCase = await em.findOneOrFail(ClinicalCase, found.id, {
        lockMode: LockMode.PESSIMISTIC_WRITE,
        refresh: true,
      });
      if (lockedItem.closedAt !== null || lockedMeeting.state === 'closed') {
        throw new ConflictError(
          'The agenda item closed meanwhile: the case was decided or its meeting closed.',
        );
      }
      if (lockedCase.status !== 'on-agenda') {
        throw new ConflictError(`The case is ${lockedCase.status} now; nothing was signed.`);
      }
      const now = new Date();
      const decision = new Decision({
        clinicalCase: em.getReference(ClinicalCase, found.id, { wrapped: true }),
        outcome: body.outcome,
        rationale: body.rationale,
        signer: em.getReference(User, user.id, { wrapped: true }),
        signInMethod,
        quorum,
      });
      decision.signedAt = now;
      decision.agendaItem = em.getReference(AgendaItem, item.id, { wrapped: true });
      decision.conditions = body.conditions || null;
      decision.quorumOverrideReason = overrideReason;
      decision.urgency = body.urgency ?? 'routine';
      em.persist(decision);

      const plans = await em.find(NeedlePlan, { clinicalCase: found.id });
      const setAside: string[] = [];
      for (const plan of plans) {
        if (plan.id === body.planId) {
          if (plan.status !== 'assessed') {
            throw new ConflictError(
              `The selected plan is ${plan.status} now; choose an assessed plan.`,
            );
          }
          plan.status = 'selected';
          decision.selectedPlan = em.getReference(NeedlePlan, plan.id, { wrapped: true });
        } else if ((setAsideStatuses as readonly string[]).includes(plan.status)) {
          setAside.push(plan.id);
          plan.status = 'set-aside';
        }
      }
      if (body.planId && !decision.selectedPlan) {
        throw new ConflictError('The selected plan is no longer one of this case’s plans.');
      }
      lockedCase.status = 'decided';
      lockedItem.closedAt = now;
      recordAudit(em, actor, {
        action: 'decision.sign',
        entityType: 'case',
        entityId: found.id,
        detail: {
          decisionId: decision.id,
          meetingId: meeting.id,
          agendaItemId: item.id,
          outcome: body.outcome,
          planId: body.planId ?? null,
          urgency: decision.urgency,
          setAsidePlanIds: setAside,
          isQuorumMet: quorum.isMet,
          isQuorumOverridden: overrideReason !== null,
          signInMethod,
        },
      });
      return decision.id;
    });

    const [view] = await loadDecisionViews(this.em.fork(), { id: decisionId });
    const room = this.room.toMeeting(meeting.id);
    room.emit('decision:recorded', {
      meetingId: meeting.id,
      agendaItemId: item.id,
      decision: view,
    });
    room.emit('agenda:changed', { meetingId: meeting.id, reason: 'decision' });
    return view;
  }

  async amend(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: AmendDecision,
    credentials: SignerCredentials,
  ): Promise<DecisionView> {
    const found = await this.findSignable(user, caseId, 'amends the board’s decision');
    const decision = await this.em.findOne(Decision, { clinicalCase: found.id });
    if (!decision) throw new NotFoundError('The decision');
    await confirmSigner(this.em, user, actor, credentials, { action: 'amend', caseId: found.id });
    const amendment = new DecisionAmendment({
      decision: this.em.getReference(Decision, decision.id, { wrapped: true }),
      reason: body.reason,
      text: body.text,
      signer: this.em.getReference(User, user.id, { wrapped: true }),
    });
    this.em.persist(amendment);
    recordAudit(this.em, actor, {
      action: 'decision.amend',
      entityType: 'case',
      entityId: found.id,
      detail: { decisionId: decision.id, amendmentId: amendment.id },
    });
    await this.em.flush();
    const [view] = await loadDecisionViews(this.em.fork(), { id: decision.id });
    return view;
  }

  /**
   * The case, for a proceduralist of its board. Anyone else on the board (a member, a
   * coordinator, the presenter) is told 403 even before the coordinator could see the case;
   * someone off the board 404, as for any case out of reach.
   */
  private async findSignable(
    user: SignedInUser,
    caseId: string,
    doing: string,
  ): Promise<ClinicalCase> {
    const found = await this.em.findOne(ClinicalCase, {
      id: caseId,
      board: { $in: [...user.memberships.keys()] },
    });
    if (!found) throw new NotFoundError('The case');
    if (!hasRole(user, 'proceduralist')) {
      throw new ForbiddenError(`Only a proceduralist of the case’s board ${doing}.`);
    }
    return found;
  }

  /** An ablation names an assessed plan of this case (400 naming `planId` otherwise). */
  private async assertSelectablePlan(caseId: string, body: RecordDecision): Promise<void> {
    const plan = await this.em.findOne(NeedlePlan, { id: body.planId, clinicalCase: caseId });
    let message: string | null = null;
    if (!ablationTreatments.includes(body.outcome)) {
      message = 'A plan is selected only for an ablation outcome.';
    } else if (!plan) {
      message = 'The plan is not one of this case’s plans.';
    } else if (plan.status !== 'assessed') {
      message = `Only an assessed plan is selected; this one is ${plan.status}.`;
    }
    if (message) throw new ValidationError(`planId: ${message}`, [{ path: 'planId', message }]);
  }

  /**
   * Without quorum only the meeting's chair records, and only with a reason, which is kept with
   * the decision. With quorum no reason is kept: there was nothing to override.
   */
  private quorumOverride(
    user: SignedInUser,
    meeting: Meeting,
    quorum: QuorumView,
    body: RecordDecision,
  ): string | null {
    if (quorum.isMet) return null;
    if (!body.quorumOverrideReason) {
      throw new ConflictError(
        `Quorum not met: ${quorum.explanation.replace(/^Not met:\s*/, '')} ` +
          'The meeting’s chair may record the decision without quorum, giving the reason.',
      );
    }
    if (meeting.chair.id !== user.id) {
      throw new ForbiddenError('Only the chair may override quorum.');
    }
    return body.quorumOverrideReason;
  }
}
