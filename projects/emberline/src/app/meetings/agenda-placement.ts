import { DatePipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  inject,
  input,
  output,
  signal,
} from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatFormField, MatLabel } from '@angular/material/form-field';
import { MatOption, MatSelect } from '@angular/material/select';
import { RouterLink } from '@angular/router';
import type { CaseDetail, MeetingView } from '@emberline/shared';
import { AuthSession } from '../core/auth-session';
import { problemMessage } from '../core/problem';
import { MeetingApi } from './meeting-api';
import { meetingTimeline } from './meeting-timeline';

/**
 * In a case file: lets the case's presenting physician put a case that is ready for board on one
 * of the board's scheduled upcoming meetings, then names the meeting it went on.
 */
@Component({
  selector: 'em-agenda-placement',
  imports: [
    DatePipe,
    FormsModule,
    RouterLink,
    MatFormField,
    MatLabel,
    MatSelect,
    MatOption,
    MatButton,
  ],
  template: `
    @if (placedOn(); as meeting) {
      <p class="em-note placed" role="status">
        On the agenda of the meeting of
        <a [routerLink]="['/meetings', meeting.id]"
          ><time [attr.datetime]="meeting.startsAt">{{
            meeting.startsAt | date: 'EEE d MMM y, HH:mm'
          }}</time></a
        >
      </p>
    } @else if (isEligible()) {
      <div class="em-panel placement">
        @if (meetings.isLoading()) {
          <p class="em-muted">Looking for the board's meetings…</p>
        } @else if (meetings.error()) {
          <p class="em-error-text" role="alert">
            The board's meetings could not be loaded: {{ loadError() }}
          </p>
        } @else if (choices().length) {
          <mat-form-field subscriptSizing="dynamic">
            <mat-label>Meeting</mat-label>
            <mat-select id="agenda-meeting" [(ngModel)]="chosenId">
              @for (meeting of choices(); track meeting.id) {
                <mat-option [value]="meeting.id"
                  >{{ meeting.startsAt | date: 'EEE d MMM y, HH:mm' }} ·
                  {{ meeting.agendaCount }} on the agenda</mat-option
                >
              }
            </mat-select>
          </mat-form-field>
          <button
            mat-flat-button
            type="button"
            [disabled]="!chosenId() || isSaving()"
            (click)="place()"
          >
            Put on a meeting's agenda
          </button>
        } @else {
          <p class="em-muted">
            This case is ready for board, but the board has no scheduled meeting ahead. Schedule one
            from the board's page.
          </p>
        }
        @if (errorText()) {
          <p class="em-error-text" role="alert">{{ errorText() }}</p>
        }
      </div>
    }
  `,
  styles: `
    .placement {
      display: flex;
      flex-wrap: wrap;
      align-items: center;
      gap: 8px 16px;
    }

    .placement p {
      margin: 0;
    }

    .placed {
      margin: 0;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AgendaPlacement {
  private readonly api = inject(MeetingApi);
  private readonly session = inject(AuthSession);

  readonly caseDetail = input.required<CaseDetail>();
  /** The meeting the case went on; the case file reloads to show its new status. */
  readonly placed = output<MeetingView>();

  /** Only the presenter places a ready case; the server checks it again. */
  protected readonly isEligible = computed(() => {
    const detail = this.caseDetail();
    return detail.status === 'ready-for-board' && detail.presenter.id === this.session.user()?.id;
  });
  /** A string, so that a reloaded case with the same board asks for nothing again. */
  private readonly boardId = computed(() =>
    this.isEligible() ? this.caseDetail().board.id : undefined,
  );
  protected readonly meetings = this.api.boardMeetings(this.boardId);
  protected readonly choices = computed(() => {
    if (!this.meetings.hasValue()) return [];
    return meetingTimeline(this.meetings.value(), Date.now()).upcoming.filter(
      (meeting) => meeting.state === 'scheduled',
    );
  });
  protected readonly loadError = computed(() => problemMessage(this.meetings.error()));
  protected readonly chosenId = signal('');
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  /** The meeting the case was just put on here, or the one the server says holds it. */
  protected readonly placedOn = computed<{ id: string; startsAt: string } | null>(
    () => this.justPlaced() ?? this.caseDetail().nextMeeting ?? null,
  );
  private readonly justPlaced = signal<MeetingView | null>(null);

  protected place(): void {
    const meetingId = this.chosenId();
    if (!meetingId) return;
    this.isSaving.set(true);
    this.errorText.set('');
    this.api.addToAgenda(meetingId, this.caseDetail().id).subscribe({
      next: (meeting) => {
        this.isSaving.set(false);
        this.justPlaced.set(meeting);
        this.placed.emit(meeting);
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.errorText.set(`The case could not be put on the agenda: ${problemMessage(error)}`);
      },
    });
  }
}
