import type { EntityManager } from '@mikro-orm/postgresql';
import {
  treatmentLabels,
  treatments,
  type PlanStatus,
  type TallyRow,
  type TallyView,
} from '@emberline/shared';
import { NotFoundError } from '../../common/errors';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { Vote } from './vote.entity';

/**
 * A plan is put to the vote once its assessment has run: the board weighs a plan against its
 * computed zone, never a bare draft. A selected or set-aside plan stays an option, so the tally
 * of a decided item still shows what was weighed.
 */
export const votablePlanStatuses: readonly PlanStatus[] = ['assessed', 'selected', 'set-aside'];

export interface VoteOption {
  option: string;
  label: string;
}

/** The options of a case's agenda item: its assessed plans, oldest first, then every treatment. */
export async function optionsOf(em: EntityManager, caseId: string): Promise<VoteOption[]> {
  const plans = await em.find(
    NeedlePlan,
    { clinicalCase: caseId, status: { $in: [...votablePlanStatuses] } },
    { orderBy: { createdAt: 'asc', id: 'asc' }, fields: ['id', 'name'] },
  );
  return [
    ...plans.map((plan) => ({ option: plan.id, label: plan.name })),
    ...treatments.map((treatment) => ({ option: treatment, label: treatmentLabels[treatment] })),
  ];
}

/**
 * The counts of an agenda item, every option in order with zeros too, as broadcast to the room
 * (no `mine`). Used by the votes routes and by the minutes, so both count the same way.
 */
export async function tallyOf(em: EntityManager, agendaItemId: string): Promise<TallyView> {
  const item = await em.findOneOrFail(AgendaItem, agendaItemId, {
    populate: ['meeting'],
    failHandler: () => new NotFoundError('The agenda item'),
  });
  const options = await optionsOf(em, item.clinicalCase.id);
  const rows = new Map<string, TallyRow>(
    options.map(({ option, label }) => [
      option,
      { option, label, support: 0, oppose: 0, abstain: 0 },
    ]),
  );
  const votes = await em.find(
    Vote,
    { agendaItem: item.id },
    { fields: ['option', 'position', 'voter'] },
  );
  const voters = new Set<string>();
  for (const vote of votes) {
    const row = rows.get(vote.option);
    // A position on something that is no longer an option (a plan of another state) is kept
    // for the record but counts nowhere, so the rows and the voter count agree.
    if (!row) continue;
    row[vote.position] += 1;
    voters.add(vote.voter.id);
  }
  return {
    agendaItemId: item.id,
    rows: [...rows.values()],
    voterCount: voters.size,
    isClosed: item.closedAt !== null || item.meeting.getEntity().state === 'closed',
  };
}
