import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatProgressBar } from '@angular/material/progress-bar';
import { problemMessage } from '../core/problem';
import { MeetingApi } from './meeting-api';
import { MeetingList } from './meeting-list';
import { meetingTimeline } from './meeting-timeline';

/** The meetings of every board the user sits on: upcoming first, then past. */
@Component({
  selector: 'em-my-meetings',
  imports: [MatButton, MatProgressBar, MeetingList],
  template: `
    <section class="em-page" aria-labelledby="meetings-title">
      <h1 id="meetings-title">Meetings</h1>
      @if (meetings.isLoading()) {
        <mat-progress-bar mode="indeterminate" aria-label="Loading meetings" />
      }
      @if (meetings.error()) {
        <div class="em-panel" role="alert">
          <p>The meetings could not be loaded: {{ errorText() }}</p>
          <button mat-stroked-button type="button" (click)="meetings.reload()">Try again</button>
        </div>
      } @else if (meetings.hasValue()) {
        <section class="em-panel" aria-labelledby="upcoming-title">
          <h2 id="upcoming-title">Upcoming</h2>
          <em-meeting-list
            [meetings]="timeline().upcoming"
            [showBoard]="true"
            emptyText="No upcoming meeting on your boards."
          />
        </section>
        <section class="em-panel" aria-labelledby="past-title">
          <h2 id="past-title">Past</h2>
          <em-meeting-list
            [meetings]="timeline().past"
            [showBoard]="true"
            emptyText="No past meeting on your boards."
          />
        </section>
      }
    </section>
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MyMeetings {
  protected readonly meetings = inject(MeetingApi).myMeetings();
  protected readonly timeline = computed(() =>
    meetingTimeline(this.meetings.hasValue() ? this.meetings.value() : [], Date.now()),
  );
  protected readonly errorText = computed(() => problemMessage(this.meetings.error()));
}
