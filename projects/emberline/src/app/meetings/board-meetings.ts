import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { Router } from '@angular/router';
import type { BoardMemberView } from '@emberline/shared';
import { AuthSession } from '../core/auth-session';
import { problemMessage } from '../core/problem';
import { MeetingApi } from './meeting-api';
import { MeetingList } from './meeting-list';
import { MeetingScheduleDialog, type MeetingScheduleData } from './meeting-schedule-dialog';
import { meetingTimeline } from './meeting-timeline';

/** The meetings of one board, upcoming then past, and the way to schedule one. */
@Component({
  selector: 'em-board-meetings',
  imports: [MatButton, MatIcon, MatProgressBar, MeetingList],
  template: `
    <section class="em-panel" aria-labelledby="board-meetings-title">
      <div class="heading">
        <h2 id="board-meetings-title">Meetings</h2>
        @if (maySchedule()) {
          <button
            mat-stroked-button
            type="button"
            [disabled]="!members().length"
            (click)="openSchedule()"
          >
            <mat-icon aria-hidden="true">event</mat-icon> Schedule a meeting
          </button>
        }
      </div>
      @if (meetings.isLoading()) {
        <mat-progress-bar mode="indeterminate" aria-label="Loading meetings" />
      }
      @if (meetings.error()) {
        <p class="em-error-text" role="alert">
          The meetings could not be loaded: {{ errorText() }}
        </p>
        <button mat-stroked-button type="button" (click)="meetings.reload()">Try again</button>
      } @else if (meetings.hasValue()) {
        <h3>Upcoming</h3>
        <em-meeting-list [meetings]="timeline().upcoming" emptyText="No upcoming meeting." />
        <h3>Past</h3>
        <em-meeting-list [meetings]="timeline().past" emptyText="No past meeting." />
      }
    </section>
  `,
  styles: `
    .heading {
      display: flex;
      flex-wrap: wrap;
      align-items: center;
      justify-content: space-between;
      gap: 8px;
    }

    h3 {
      font: var(--mat-sys-title-small);
      margin: 16px 0 4px;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BoardMeetings {
  private readonly api = inject(MeetingApi);
  private readonly session = inject(AuthSession);
  private readonly dialog = inject(MatDialog);
  private readonly router = inject(Router);

  readonly boardId = input.required<string>();
  readonly boardName = input('');
  readonly members = input<readonly BoardMemberView[]>([]);

  protected readonly meetings = this.api.boardMeetings(this.boardId);
  protected readonly timeline = computed(() =>
    meetingTimeline(this.meetings.hasValue() ? this.meetings.value() : [], Date.now()),
  );
  protected readonly errorText = computed(() => problemMessage(this.meetings.error()));
  /** The server decides; this only hides a button that would be refused. */
  protected readonly maySchedule = computed(() => {
    const user = this.session.user();
    if (!user) return false;
    if (this.session.isAdministrator()) return true;
    const isMember = this.members().some((member) => member.userId === user.id);
    return isMember && this.session.hasRole('presenting-physician', 'proceduralist');
  });

  protected openSchedule(): void {
    const data: MeetingScheduleData = {
      boardId: this.boardId(),
      boardName: this.boardName(),
      members: this.members(),
    };
    this.dialog
      .open(MeetingScheduleDialog, { data, autoFocus: 'first-tabbable' })
      .afterClosed()
      .subscribe((meeting) => {
        if (!meeting) return;
        this.meetings.reload();
        void this.router.navigate(['/meetings', meeting.id]);
      });
  }
}
