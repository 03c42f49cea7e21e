import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { treatments, type CastVote, type TallyView } from '@emberline/shared';
import { VotePanel } from './vote-panel';

const planId = '0b8f3a52-6f0e-4a57-9b1c-2f4e4f1d7a10';

function tally(mine: TallyView['mine'] = []): TallyView {
  return {
    agendaItemId: 'item-1',
    rows: [
      { option: planId, label: 'Plan A', support: 2, oppose: 0, abstain: 1 },
      ...treatments.map((option) => ({
        option,
        label: option,
        support: option === 'tace' ? 1 : 0,
        oppose: 0,
        abstain: 0,
      })),
    ],
    voterCount: 3,
    mine,
    isClosed: false,
  };
}

describe('VotePanel', () => {
  beforeEach(() => {
    TestBed.configureTestingModule({ providers: [provideZonelessChangeDetection()] });
  });

  async function render(current: TallyView, canVote = true) {
    const fixture = TestBed.createComponent(VotePanel);
    fixture.componentRef.setInput('tally', current);
    fixture.componentRef.setInput('canVote', canVote);
    const votes: CastVote[] = [];
    fixture.componentInstance.vote.subscribe((vote) => votes.push(vote));
    await fixture.whenStable();
    return { fixture, votes, element: fixture.nativeElement as HTMLElement };
  }

  it('lists the plans and the treatments with votes, and every treatment on request', async () => {
    const { fixture, element } = await render(tally());
    const rows = () =>
      Array.from(element.querySelectorAll('tbody tr th')).map((cell) => cell.textContent?.trim());
    expect(rows()).toEqual(['Plan A', 'tace']);
    (element.querySelector('.em-link-button') as HTMLButtonElement).click();
    await fixture.whenStable();
    expect(rows()).toHaveLength(1 + treatments.length);
  });

  it('casts a position, and the same position again withdraws it', async () => {
    const { fixture, votes, element } = await render(
      tally([
        {
          option: planId,
          position: 'support',
          comment: null,
          voter: { id: 'me', displayName: 'Me' },
          castAt: '2026-12-02T10:00:00Z',
        },
      ]),
    );
    const buttons = [
      ...Array.from(element.querySelectorAll('tbody tr:first-child button')),
    ] as HTMLButtonElement[];
    buttons.find((button) => button.textContent?.includes('Oppose'))?.click();
    buttons.find((button) => button.textContent?.includes('Support'))?.click();
    await fixture.whenStable();
    expect(votes).toEqual([
      { option: planId, position: 'oppose' },
      { option: planId, position: null },
    ]);
  });

  it('offers no buttons to someone who does not vote, or once voting has closed', async () => {
    const { element } = await render(tally(), false);
    expect(element.querySelectorAll('tbody button')).toHaveLength(0);
    const closed = await render({ ...tally(), isClosed: true });
    expect(closed.element.querySelectorAll('tbody button')).toHaveLength(0);
    expect(closed.element.textContent).toContain('voting has closed');
  });
});
