import { ChangeDetectionStrategy, Component, computed, input, output, signal } from '@angular/core';
import { MatButtonToggle, MatButtonToggleGroup } from '@angular/material/button-toggle';
import {
  treatments,
  votePositionLabels,
  votePositions,
  type CastVote,
  type TallyView,
  type VotePosition,
} from '@emberline/shared';

/**
 * The live tally of one agenda item, option by option (plans first, then treatments), and — for
 * a member who votes — their own position on each, which a second press withdraws.
 */
@Component({
  selector: 'em-vote-panel',
  imports: [MatButtonToggleGroup, MatButtonToggle],
  template: `
    @let current = tally();
    @if (!current) {
      <p class="em-muted">Reading the tally…</p>
    } @else {
      <p class="summary" role="status">
        {{ current.voterCount }}
        {{ current.voterCount === 1 ? 'member has' : 'members have' }} voted{{
          current.isClosed ? '; voting has closed' : ''
        }}.
      </p>
      @if (error()) {
        <p class="em-error-text" role="alert">{{ error() }}</p>
      }
      <table class="tally">
        <caption class="cdk-visually-hidden">
          Positions per option
        </caption>
        <thead>
          <tr>
            <th scope="col">Option</th>
            <th scope="col" class="count">Support</th>
            <th scope="col" class="count">Oppose</th>
            <th scope="col" class="count">Abstain</th>
            @if (canVote() && !current.isClosed) {
              <th scope="col">Your position</th>
            }
          </tr>
        </thead>
        <tbody>
          @for (row of visibleRows(); track row.option) {
            <tr [class.has-votes]="row.support + row.oppose + row.abstain > 0">
              <th scope="row">{{ row.label }}</th>
              <td class="count" [attr.data-option]="row.option" data-position="support">
                {{ row.support }}
              </td>
              <td class="count">{{ row.oppose }}</td>
              <td class="count">{{ row.abstain }}</td>
              @if (canVote() && !current.isClosed) {
                <td>
                  <mat-button-toggle-group
                    hideSingleSelectionIndicator
                    [value]="mine().get(row.option) ?? null"
                    [attr.aria-label]="'Your position on ' + row.label"
                  >
                    @for (position of positions; track position) {
                      <mat-button-toggle
                        [value]="position"
                        [disabled]="isSending()"
                        (click)="choose(row.option, position)"
                        >{{ positionLabels[position] }}</mat-button-toggle
                      >
                    }
                  </mat-button-toggle-group>
                </td>
              }
            </tr>
          }
        </tbody>
      </table>
      <button type="button" class="em-link-button" (click)="isShowingAll.set(!isShowingAll())">
        {{ isShowingAll() ? 'Show plans and options with votes only' : 'Show every treatment' }}
      </button>
    }
  `,
  styles: `
    .tally {
      width: 100%;
      border-collapse: collapse;
    }
    .tally th,
    .tally td {
      text-align: left;
      padding: 4px 6px;
      border-bottom: 1px solid var(--mat-sys-outline-variant);
    }
    .tally .count {
      text-align: right;
      font-variant-numeric: tabular-nums;
      width: 5ch;
    }
    .has-votes th {
      font-weight: 600;
    }
    .summary {
      margin: 0 0 6px;
    }
    .em-link-button {
      background: none;
      border: 0;
      padding: 4px 0;
      color: var(--mat-sys-primary);
      cursor: pointer;
      font: inherit;
      text-decoration: underline;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class VotePanel {
  readonly tally = input<TallyView | null>(null);
  readonly canVote = input(false);
  readonly isSending = input(false);
  readonly error = input('');
  /** The member's choice; the same position again withdraws it (`position: null`). */
  readonly vote = output<CastVote>();

  protected readonly positions = votePositions;
  protected readonly positionLabels = votePositionLabels;
  protected readonly isShowingAll = signal(false);

  protected readonly mine = computed(
    () => new Map((this.tally()?.mine ?? []).map((vote) => [vote.option, vote.position])),
  );

  /** Plans always; treatments when they have votes, the member's own, or on request. */
  protected readonly visibleRows = computed(() => {
    const current = this.tally();
    if (!current) return [];
    if (this.isShowingAll()) return current.rows;
    const mine = this.mine();
    return current.rows.filter(
      (row) =>
        !isTreatmentRow(row.option) ||
        row.support + row.oppose + row.abstain > 0 ||
        mine.has(row.option),
    );
  });

  protected choose(option: string, position: VotePosition): void {
    const isSame = this.mine().get(option) === position;
    this.vote.emit({ option, position: isSame ? null : position });
  }
}

/** An option is a treatment or a plan's id. */
function isTreatmentRow(option: string): boolean {
  return (treatments as readonly string[]).includes(option);
}
