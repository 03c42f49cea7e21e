import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import {
  anaesthesiaLabels,
  checklistItemLabels,
  bookingStateLabels,
  followUpModalityLabels,
  type BookingHistoryEntry,
  type BookingView,
  type NotificationView,
} from '@emberline/shared';

const historyActionLabels: Record<BookingHistoryEntry['action'], string> = {
  booked: 'Booked',
  rebooked: 'Rebooked',
  cancelled: 'Cancelled',
  confirmed: 'Confirmed',
  done: 'Marked done',
  override: 'Checklist item overridden',
};

const notificationStateLabels: Record<NotificationView['state'], string> = {
  queued: 'Queued',
  sent: 'Sent',
  failed: 'Failed',
};

/** Booking fields named in a rebooking's history. */
const changedFieldLabels: Record<string, string | undefined> = {
  startsAt: 'Start',
  durationMin: 'Duration (minutes)',
  room: 'Room',
  operator: 'Operator',
  anaesthesia: 'Anaesthesia',
  notes: 'Notes',
  state: 'State',
};

/**
 * One booking as it stands (when, how long, where, who, anaesthesia or imaging, the plan's
 * applicators, notes, state), then its history and the care team's notifications with their
 * delivery state.
 */
@Component({
  selector: 'em-booking-card',
  imports: [DatePipe],
  templateUrl: './booking-card.html',
  styleUrl: './booking-card.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BookingCard {
  readonly booking = input.required<BookingView>();
  /** Past bookings show their facts only. */
  readonly isBrief = input(false);

  protected readonly anaesthesiaLabels = anaesthesiaLabels;
  protected readonly modalityLabels = followUpModalityLabels;
  protected readonly actionLabels = historyActionLabels;
  protected readonly deliveryLabels = notificationStateLabels;
  /** A history entry's field as the reader knows it: a booking field or a checklist item. */
  protected fieldLabel(field: string): string {
    return (
      changedFieldLabels[field] ??
      (checklistItemLabels as Record<string, string | undefined>)[field] ??
      field
    );
  }

  /** The follow-up imaging has no checklist: "booked" is simply booked. */
  protected readonly stateText = computed(() => {
    const booking = this.booking();
    return booking.kind === 'follow-up-imaging' && booking.state === 'booked'
      ? 'Booked'
      : bookingStateLabels[booking.state];
  });
}
