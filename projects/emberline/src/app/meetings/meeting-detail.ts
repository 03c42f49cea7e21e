import { DatePipe } from '@angular/common';
import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatMenu, MatMenuItem, MatMenuTrigger } from '@angular/material/menu';
import { MatProgressBar } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import {
  meetingStateLabels,
  primaryDiagnosisLabels,
  specialtyLabels,
  type AgendaItemView,
} from '@emberline/shared';
import { AuthSession } from '../core/auth-session';
import { problemMessage } from '../core/problem';
import { BoardRoom } from '../board-session/board-room';
import { CaseStatusBadge } from '../cases/case-status-badge';
import { MeetingApi } from './meeting-api';
import { meetingTimeline } from './meeting-timeline';

/** One meeting: when, where, who chairs, and its agenda in order; the chair reorders it. */
@Component({
  selector: 'em-meeting-detail',
  imports: [
    DatePipe,
    RouterLink,
    MatButton,
    MatIconButton,
    MatIcon,
    MatProgressBar,
    MatMenu,
    MatMenuItem,
    MatMenuTrigger,
    CaseStatusBadge,
    BoardRoom,
  ],
  template: `
    <section class="em-page" [class.live]="isLive()" aria-labelledby="meeting-title">
      <a class="back" routerLink="/meetings"
        ><mat-icon aria-hidden="true">arrow_back</mat-icon> All meetings</a
      >
      @if (meeting.isLoading() && !meeting.hasValue()) {
        <mat-progress-bar mode="indeterminate" aria-label="Loading the meeting" />
      }
      @if (loadError()) {
        <h1 id="meeting-title">Meeting</h1>
        <div class="em-panel" role="alert">
          <p>{{ loadError() }}</p>
          <button mat-stroked-button type="button" (click)="meeting.reload()">Try again</button>
        </div>
      } @else if (meeting.hasValue()) {
        @let current = meeting.value();
        <h1 id="meeting-title">
          {{ current.boardName }} ·
          <time [attr.datetime]="current.startsAt">{{
            current.startsAt | date: 'EEE d MMM y, HH:mm'
          }}</time>
        </h1>
        @if (!isLive()) {
          <div class="em-panel">
            <dl class="facts">
              <dt>State</dt>
              <dd>{{ stateLabels[current.state] }}</dd>
              <dt>Duration</dt>
              <dd>{{ current.durationMin }} min</dd>
              <dt>Chair</dt>
              <dd>{{ current.chair.displayName }}</dd>
              <dt>Place</dt>
              <dd>{{ current.place ?? 'Not given' }}</dd>
              <dt>Quorum</dt>
              <dd>{{ quorumText() }}</dd>
            </dl>
            @switch (current.state) {
              @case ('closed') {
                <p>
                  The meeting is closed.
                  <a [routerLink]="['/meetings', current.id, 'minutes']">Read the minutes</a>
                </p>
              }
              @case ('in-session') {
                <p class="em-muted">The board session is running below.</p>
              }
              @default {
                @if (isMember() && !isLive()) {
                  <button mat-flat-button type="button" (click)="joinRequested.set(true)">
                    {{ mayOrder() ? 'Open the board session' : 'Join the board session' }}
                  </button>
                  <p class="em-muted">
                    {{
                      mayOrder()
                        ? 'Opening the session starts the meeting: attendance is recorded from then on.'
                        : 'The session starts when the chair opens it; you may wait in the room.'
                    }}
                  </p>
                }
              }
            }
          </div>
        }
        @if (isLive()) {
          <em-board-room [meeting]="current" (changed)="meeting.reload()" />
        }
        @if (!isLive()) {
          <section class="em-panel" aria-labelledby="agenda-title">
            <h2 id="agenda-title">Agenda</h2>
            <p class="em-note" role="status">{{ actionNote() }}</p>
            @if (actionError()) {
              <p class="em-error-text" role="alert">{{ actionError() }}</p>
            }
            @if (current.agenda.length) {
              <ol class="agenda">
                @for (item of current.agenda; track item.id; let first = $first, last = $last) {
                  <li class="item">
                    <span class="position">{{ item.position }}</span>
                    <span class="case">
                      <a [routerLink]="['/cases', item.caseId]">{{ item.caseCode }}</a>
                      · {{ diagnosisLabels[item.primaryDiagnosis] }} · presented by
                      {{ item.presenterName }}
                    </span>
                    <em-case-status-badge [status]="item.caseStatus" />
                    @if (mayOrder()) {
                      <span class="moves">
                        <button
                          mat-icon-button
                          type="button"
                          [disabled]="first || isSaving()"
                          [attr.aria-label]="'Move ' + item.caseCode + ' up'"
                          (click)="move(item, -1)"
                        >
                          <mat-icon>arrow_upward</mat-icon>
                        </button>
                        <button
                          mat-icon-button
                          type="button"
                          [disabled]="last || isSaving()"
                          [attr.aria-label]="'Move ' + item.caseCode + ' down'"
                          (click)="move(item, 1)"
                        >
                          <mat-icon>arrow_downward</mat-icon>
                        </button>
                        @if (moveTargets().length) {
                          <button
                            mat-button
                            type="button"
                            [disabled]="isSaving()"
                            [matMenuTriggerFor]="targets"
                            [attr.aria-label]="'Move ' + item.caseCode + ' to another meeting'"
                          >
                            Move to…
                          </button>
                          <mat-menu #targets="matMenu">
                            @for (target of moveTargets(); track target.id) {
                              <button mat-menu-item type="button" (click)="moveTo(item, target.id)">
                                {{ target.startsAt | date: 'EEE d MMM y, HH:mm' }}
                              </button>
                            }
                          </mat-menu>
                        }
                      </span>
                    }
                  </li>
                }
              </ol>
            } @else {
              <p class="em-muted">
                No case on the agenda yet. A presenting physician puts a case that is ready for
                board on it from the case file.
              </p>
            }
          </section>
        }
      }
    </section>
  `,
  styles: `
    // As the case file does for its viewer: in the shell's main column the page takes the free
    // height, and a live room fills what is left below the title (the room is a workspace).
    :host {
      flex: 1 0 auto;
      display: flex;
      flex-direction: column;
    }

    .em-page {
      width: 100%;
    }

    .em-page.live {
      flex: 1 0 auto;
      max-width: none;
      padding: 8px 16px;
      gap: 6px;
    }

    .em-page.live h1 {
      margin: 0;
      font: var(--mat-sys-title-large);
    }

    .back {
      display: inline-flex;
      align-items: center;
      gap: 4px;
      text-decoration: none;
      font: var(--mat-sys-label-large);
    }

    .facts {
      display: grid;
      grid-template-columns: max-content 1fr;
      gap: 4px 16px;
      margin: 0 0 8px;
    }

    .facts dt {
      font: var(--mat-sys-label-large);
    }

    .facts dd {
      margin: 0;
    }

    .agenda {
      list-style: none;
      margin: 0;
      padding: 0;
    }

    .item {
      display: flex;
      flex-wrap: wrap;
      align-items: center;
      gap: 8px 12px;
      padding: 6px 0;
      border-bottom: 1px solid var(--mat-sys-outline-variant);
    }

    .position {
      font: var(--mat-sys-title-medium);
      min-width: 2ch;
    }

    .case {
      flex: 1 1 240px;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MeetingDetail {
  private readonly api = inject(MeetingApi);
  private readonly session = inject(AuthSession);

  /** From the route (`/meetings/:id`). */
  readonly id = input.required<string>();

  protected readonly meeting = this.api.meeting(this.id);
  protected readonly stateLabels = meetingStateLabels;
  protected readonly diagnosisLabels = primaryDiagnosisLabels;
  protected readonly isSaving = signal(false);
  protected readonly actionError = signal('');

  protected readonly loadError = computed(() => {
    const error = this.meeting.error();
    if (!error) return '';
    if (error instanceof HttpErrorResponse && error.status === 404) {
      return 'This meeting does not exist, or you are not a member of its board.';
    }
    return `The meeting could not be loaded: ${problemMessage(error)}`;
  });

  /** Only the chair orders a meeting that has not closed; the server checks it again. */
  protected readonly mayOrder = computed(() => {
    if (!this.meeting.hasValue()) return false;
    const current = this.meeting.value();
    return current.state !== 'closed' && current.chair.id === this.session.user()?.id;
  });

  /** The board's other scheduled meetings ahead, where the chair may move an item. */
  // A plain string: a reordered meeting (a new object, same board) must not ask again.
  private readonly targetBoardId = computed(() =>
    this.mayOrder() && this.meeting.hasValue() ? this.meeting.value().boardId : undefined,
  );
  private readonly boardMeetings = this.api.boardMeetings(this.targetBoardId);
  protected readonly moveTargets = computed(() => {
    if (!this.boardMeetings.hasValue()) return [];
    return meetingTimeline(this.boardMeetings.value(), Date.now()).upcoming.filter(
      (other) => other.state === 'scheduled' && other.id !== this.id(),
    );
  });
  protected readonly actionNote = signal('');

  /** A member who asked to join a meeting that has not started. */
  protected readonly joinRequested = signal(false);
  protected readonly isMember = computed(() => {
    if (!this.meeting.hasValue()) return false;
    const boardId = this.meeting.value().boardId;
    return (this.session.user()?.boards ?? []).some((board) => board.boardId === boardId);
  });
  /** The live room: a running meeting, or one a member has chosen to enter. */
  protected readonly isLive = computed(() => {
    if (!this.meeting.hasValue() || !this.isMember()) return false;
    const state = this.meeting.value().state;
    return state === 'in-session' || (state === 'scheduled' && this.joinRequested());
  });

  protected readonly quorumText = computed(() => {
    if (!this.meeting.hasValue()) return '';
    const required = this.meeting.value().requiredSpecialties;
    return required.length
      ? `Needs ${required.map((specialty) => specialtyLabels[specialty]).join(', ')}`
      : 'No specialty required';
  });

  protected moveTo(item: AgendaItemView, targetId: string): void {
    this.isSaving.set(true);
    this.actionError.set('');
    this.actionNote.set('');
    this.api.moveItem(item.id, targetId).subscribe({
      next: () => {
        this.isSaving.set(false);
        this.actionNote.set(`${item.caseCode} moved to another meeting.`);
        this.meeting.reload();
        this.boardMeetings.reload();
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.actionError.set(`${item.caseCode} could not be moved: ${problemMessage(error)}`);
      },
    });
  }

  protected move(item: AgendaItemView, step: -1 | 1): void {
    if (!this.meeting.hasValue()) return;
    const current = this.meeting.value();
    const ids = current.agenda.map((entry) => entry.id);
    const from = ids.indexOf(item.id);
    const to = from + step;
    if (from < 0 || to < 0 || to >= ids.length) return;
    [ids[from], ids[to]] = [ids[to], ids[from]];
    this.isSaving.set(true);
    this.actionError.set('');
    this.actionNote.set('');
    this.api.orderAgenda(current.id, ids).subscribe({
      next: (view) => {
        this.isSaving.set(false);
        this.meeting.set(view);
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.actionError.set(`The agenda could not be reordered: ${problemMessage(error)}`);
      },
    });
  }
}
