import { treatmentLabels, treatments, type Treatment } from '@emberline/shared';

/**
 * The words for a vote's option: a treatment's label, or the name of the case's plan it names.
 * A plan id the case's plans do not list (it cannot be read now) is said so, not shown as an id.
 */
export function voteOptionLabel(
  option: string,
  plans: readonly { id: string; name: string }[],
): string {
  if ((treatments as readonly string[]).includes(option)) {
    return treatmentLabels[option as Treatment];
  }
  const plan = plans.find((candidate) => candidate.id === option);
  return plan ? `Plan: ${plan.name}` : 'A plan no longer listed for this case';
}
