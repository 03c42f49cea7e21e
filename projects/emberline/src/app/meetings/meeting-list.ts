import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, input } from '@angular/core';
import { RouterLink } from '@angular/router';
import { meetingStateLabels, type MeetingSummary } from '@emberline/shared';

/** Meetings as a list of links to each meeting, with the facts one plans around. */
@Component({
  selector: 'em-meeting-list',
  imports: [RouterLink, DatePipe],
  template: `
    @if (meetings().length) {
      <ul class="meetings">
        @for (meeting of meetings(); track meeting.id) {
          <li class="meeting">
            <a class="when" [routerLink]="['/meetings', meeting.id]">
              <time [attr.datetime]="meeting.startsAt">{{
                meeting.startsAt | date: 'EEE d MMM y, HH:mm'
              }}</time>
            </a>
            <span class="state">{{ stateLabels[meeting.state] }}</span>
            <span class="em-muted facts">
              @if (showBoard()) {
                {{ meeting.boardName }} ·
              }
              {{ meeting.durationMin }} min · chaired by {{ meeting.chair.displayName }}
              @if (meeting.place) {
                · {{ meeting.place }}
              }
              · {{ meeting.agendaCount }} {{ meeting.agendaCount === 1 ? 'case' : 'cases' }} on the
              agenda
            </span>
          </li>
        }
      </ul>
    } @else {
      <p class="em-muted">{{ emptyText() }}</p>
    }
  `,
  styles: `
    .meetings {
      list-style: none;
      margin: 0;
      padding: 0;
    }

    .meeting {
      display: flex;
      flex-wrap: wrap;
      align-items: baseline;
      gap: 4px 12px;
      padding: 8px 0;
      border-bottom: 1px solid var(--mat-sys-outline-variant);
    }

    .when {
      font: var(--mat-sys-title-small);
    }

    .state {
      font: var(--mat-sys-label-medium);
    }

    .facts {
      flex-basis: 100%;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MeetingList {
  readonly meetings = input.required<readonly MeetingSummary[]>();
  readonly emptyText = input('No meetings.');
  /** On a page that mixes boards, each meeting names its board. */
  readonly showBoard = input(false);
  protected readonly stateLabels = meetingStateLabels;
}
