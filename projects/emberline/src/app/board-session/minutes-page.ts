import { DatePipe } from '@angular/common';
import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import {
  planStatusLabels,
  specialtyLabels,
  verdictLevelLabels,
  type PlanStatus,
  type VerdictLevel,
  treatmentLabels,
  votePositionLabels,
  type MinutesItem,
} from '@emberline/shared';
import { ClinicalCaution } from '../core/clinical-caution';
import { problemMessage } from '../core/problem';
import { BoardSessionApi } from './board-session-api';

/**
 * The frozen minutes of a closed meeting, as written when the chair closed it: attendance, then
 * case by case the plans discussed with their verdicts, the tally, the comments marked for the
 * minutes and the decision. Printable (the shell and the buttons stay off paper).
 */
@Component({
  selector: 'em-minutes-page',
  imports: [DatePipe, RouterLink, MatButton, MatIcon, MatProgressBar, ClinicalCaution],
  template: `
    <section class="em-page minutes em-print-focus" aria-labelledby="minutes-title">
      <p class="no-print">
        <a [routerLink]="['/meetings', id()]"
          ><mat-icon aria-hidden="true">arrow_back</mat-icon> The meeting</a
        >
      </p>
      @if (minutes.isLoading()) {
        <mat-progress-bar mode="indeterminate" aria-label="Loading the minutes" />
      }
      @if (loadError()) {
        <h1 id="minutes-title">Minutes</h1>
        <p role="alert">{{ loadError() }}</p>
      } @else if (minutes.hasValue()) {
        @let record = minutes.value();
        @let content = record.content;
        <h1 id="minutes-title">
          Minutes · {{ content.boardName }} ·
          <time [attr.datetime]="content.startsAt">{{
            content.startsAt | date: 'EEE d MMM y, HH:mm'
          }}</time>
        </h1>
        <p class="frozen">
          Frozen {{ record.frozenAt | date: 'd MMM y, HH:mm' }} when {{ content.closedBy }} closed
          the meeting. Chair: {{ content.chair }}. {{ content.place ?? '' }}
          <span class="digest">SHA-256 {{ record.sha256 }}</span>
        </p>
        <button mat-stroked-button type="button" class="no-print print" (click)="print()">
          <mat-icon aria-hidden="true">print</mat-icon> Print
        </button>
        <h2>Attendance</h2>
        <p>Quorum at close: {{ content.quorum.explanation }}</p>
        <table class="attendance">
          <thead>
            <tr>
              <th scope="col">Member</th>
              <th scope="col">Specialty</th>
              <th scope="col">Joined</th>
              <th scope="col">Left</th>
              <th scope="col">How</th>
            </tr>
          </thead>
          <tbody>
            @for (person of content.attendance; track person.userId) {
              <tr>
                <td>{{ person.displayName }}</td>
                <td>{{ person.specialty ? specialtyLabels[person.specialty] : '—' }}</td>
                <td>{{ person.firstJoinedAt | date: 'HH:mm' }}</td>
                <td>{{ person.lastLeftAt ? (person.lastLeftAt | date: 'HH:mm') : '—' }}</td>
                <td>{{ person.via === 'room' ? 'In the session' : 'By vote only' }}</td>
              </tr>
            }
          </tbody>
        </table>
        @for (item of content.items; track item.caseId) {
          <article class="item" [attr.aria-labelledby]="'item-' + item.position">
            <h2 [id]="'item-' + item.position">
              {{ item.position }}. {{ item.caseCode }} · presented by {{ item.presenterName }}
            </h2>
            @if (item.plans.length) {
              <h3>Plans discussed</h3>
              <ul>
                @for (plan of item.plans; track plan.id) {
                  <li>
                    {{ plan.name }} · {{ plan.status }} · {{ plan.verdict ?? 'not assessed' }}
                  </li>
                }
              </ul>
            }
            <h3>Tally</h3>
            @if (votedRows(item).length) {
              <table>
                <thead>
                  <tr>
                    <th scope="col">Option</th>
                    <th scope="col">{{ positionLabels.support }}</th>
                    <th scope="col">{{ positionLabels.oppose }}</th>
                    <th scope="col">{{ positionLabels.abstain }}</th>
                  </tr>
                </thead>
                <tbody>
                  @for (row of votedRows(item); track row.option) {
                    <tr>
                      <td>{{ row.label }}</td>
                      <td>{{ row.support }}</td>
                      <td>{{ row.oppose }}</td>
                      <td>{{ row.abstain }}</td>
                    </tr>
                  }
                </tbody>
              </table>
            } @else {
              <p>No vote was cast.</p>
            }
            @if (item.comments.length) {
              <h3>Comments for the minutes</h3>
              <ul>
                @for (comment of item.comments; track $index) {
                  <li>
                    <strong>{{ comment.author }}</strong> ({{ comment.createdAt | date: 'HH:mm' }}):
                    {{ comment.body }}
                  </li>
                }
              </ul>
            }
            <h3>Decision</h3>
            @if (item.decision; as decision) {
              <p data-testid="minutes-decision">
                <strong>{{ treatmentLabels[decision.outcome] }}</strong>
                @if (decision.selectedPlan) {
                  · plan {{ decision.selectedPlan.name }}
                }
                · signed by {{ decision.signer.displayName }},
                {{ decision.signedAt | date: 'd MMM y, HH:mm' }}
              </p>
              <p>{{ decision.rationale }}</p>
              @if (decision.conditions) {
                <p>Conditions: {{ decision.conditions }}</p>
              }
              @if (decision.quorumOverrideReason) {
                <p>Recorded without quorum by the chair: {{ decision.quorumOverrideReason }}</p>
              }
            } @else {
              <p>No decision was recorded; the case returned to ready for board.</p>
            }
          </article>
        }
        <em-clinical-caution />
      }
    </section>
  `,
  styles: `
    .print {
      align-self: flex-start;
    }
    .frozen {
      color: var(--mat-sys-on-surface-variant);
    }
    .digest {
      display: block;
      font: var(--mat-sys-body-small);
      word-break: break-all;
    }
    table {
      border-collapse: collapse;
      margin: 4px 0 12px;
    }
    th,
    td {
      text-align: left;
      padding: 3px 10px 3px 0;
      border-bottom: 1px solid var(--mat-sys-outline-variant);
    }
    .item {
      break-inside: avoid;
      border-top: 1px solid var(--mat-sys-outline);
      margin-top: 16px;
    }
    @media print {
      .no-print {
        display: none !important;
      }
      .minutes {
        color: #000;
      }
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MinutesPage {
  private readonly api = inject(BoardSessionApi);
  /** From the route (`/meetings/:id/minutes`). */
  readonly id = input.required<string>();

  protected readonly specialtyLabels = specialtyLabels;
  protected readonly treatmentLabels = treatmentLabels;
  protected readonly positionLabels = votePositionLabels;
  protected readonly minutes = rxResource({
    params: () => this.id(),
    stream: ({ params }) => this.api.minutes(params),
  });
  protected readonly loadError = computed(() => {
    const error = this.minutes.error();
    if (!error) return '';
    if (error instanceof HttpErrorResponse && error.status === 404) {
      return 'There are no minutes: the meeting has not closed, or you are not a member of its board.';
    }
    return `The minutes could not be loaded: ${problemMessage(error)}`;
  });

  /** The minutes keep identifiers; the page says them in words. */
  protected planStatusText(status: string): string {
    return planStatusLabels[status as PlanStatus] ?? status;
  }

  protected verdictText(verdict: string | null): string {
    return verdict ? (verdictLevelLabels[verdict as VerdictLevel] ?? verdict) : 'not assessed';
  }

  protected votedRows(item: MinutesItem) {
    return item.tally.filter((row) => row.support + row.oppose + row.abstain > 0);
  }

  protected print(): void {
    window.print();
  }
}
