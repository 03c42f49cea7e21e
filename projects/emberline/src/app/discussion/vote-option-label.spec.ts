import { treatmentLabels } from '@emberline/shared';
import { voteOptionLabel } from './vote-option-label';

const plans = [{ id: '7d1f0c2e-8a4b-4c3d-9e5f-102030405060', name: 'Anterior subcostal' }];

describe('voteOptionLabel', () => {
  it("names a treatment by the shared list's label", () => {
    expect(voteOptionLabel('tace', plans)).toBe(treatmentLabels.tace);
  });

  it('names a plan option by the plan’s name', () => {
    expect(voteOptionLabel(plans[0].id, plans)).toBe('Plan: Anterior subcostal');
  });

  it('says a plan is no longer listed instead of showing its id', () => {
    expect(voteOptionLabel('0f0e0d0c-0b0a-4909-8807-060504030201', plans)).toBe(
      'A plan no longer listed for this case',
    );
  });
});
