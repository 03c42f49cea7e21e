import type { FilterQuery } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { DecisionView } from '@emberline/shared';
import { Decision } from './decision.entity';

/**
 * The decisions matching `where` as the API shows them, amendments oldest first. Names are
 * read as they are now; the minutes keep them as they were when the meeting closed.
 */
export async function loadDecisionViews(
  em: EntityManager,
  where: FilterQuery<Decision>,
): Promise<DecisionView[]> {
  const decisions = await em.find(Decision, where, {
    populate: ['signer', 'selectedPlan', 'agendaItem', 'amendments', 'amendments.signer'],
    orderBy: { signedAt: 'asc' },
  });
  return decisions.map(toDecisionView);
}

function toDecisionView(decision: Decision): DecisionView {
  const plan = decision.selectedPlan?.getEntity() ?? null;
  const signer = decision.signer.getEntity();
  return {
    id: decision.id,
    caseId: decision.clinicalCase.id,
    meetingId: decision.agendaItem?.getEntity().meeting.id ?? null,
    agendaItemId: decision.agendaItem?.id ?? null,
    outcome: decision.outcome,
    selectedPlan: plan ? { id: plan.id, name: plan.name } : null,
    rationale: decision.rationale,
    conditions: decision.conditions,
    signer: { id: signer.id, displayName: signer.displayName },
    signedAt: decision.signedAt.toISOString(),
    signInMethod: decision.signInMethod,
    quorum: decision.quorum,
    quorumOverrideReason: decision.quorumOverrideReason,
    urgency: decision.urgency,
    amendments: decision.amendments
      .getItems()
      .sort((a, b) => a.signedAt.getTime() - b.signedAt.getTime() || a.id.localeCompare(b.id))
      .map((amendment) => {
        const amendmentSigner = amendment.signer.getEntity();
        return {
          id: amendment.id,
          reason: amendment.reason,
          text: amendment.text,
          signer: { id: amendmentSigner.id, displayName: amendmentSigner.displayName },
          signedAt: amendment.signedAt.toISOString(),
        };
      }),
  };
}
