import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import { MatFormField, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatOption, MatSelect } from '@angular/material/select';
import { MatSort, MatSortHeader, type Sort } from '@angular/material/sort';
import { MatTableModule } from '@angular/material/table';
import { RouterLink } from '@angular/router';
import {
  bookableTreatments,
  bookingQueueKinds,
  bookingStateLabels,
  bookingUrgencies,
  bookingUrgencyLabels,
  treatmentLabels,
  type BookingQueueItem,
} from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { BookingApi } from './booking-api';
import {
  defaultQueueSort,
  emptyQueueFilter,
  filterQueue,
  isBooked,
  sortQueue,
  type QueueFilter,
} from './booking-queue-rows';

export const queueKindLabels: Record<BookingQueueItem['kind'], string> = {
  procedure: 'Procedure',
  'follow-up': 'Follow-up imaging',
};

/**
 * The nurse coordinator's queue (`/bookings`): the decided cases whose procedure is to be booked
 * and the treated cases whose follow-up imaging is due, across the coordinator's boards. The
 * server sends the whole queue; the page filters and sorts it. "Book" opens the case's Logistics
 * section with the booking dialog.
 */
@Component({
  selector: 'em-booking-queue',
  imports: [
    DatePipe,
    RouterLink,
    MatTableModule,
    TypedCellDef,
    MatSort,
    MatSortHeader,
    MatProgressBar,
    MatFormField,
    MatLabel,
    MatInput,
    MatSelect,
    MatOption,
    MatCheckbox,
    MatButton,
  ],
  templateUrl: './booking-queue.html',
  styleUrl: './booking-queue.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BookingQueue {
  protected readonly queue = inject(BookingApi).queue();

  protected readonly columns = [
    'caseCode',
    'board',
    'kind',
    'outcome',
    'urgency',
    'decisionSignedAt',
    'conditions',
    'booking',
    'action',
  ];
  protected readonly urgencies = bookingUrgencies;
  protected readonly urgencyLabels = bookingUrgencyLabels;
  protected readonly kinds = bookingQueueKinds;
  protected readonly kindLabels = queueKindLabels;
  protected readonly outcomes = bookableTreatments;
  protected readonly outcomeLabels = treatmentLabels;
  protected readonly stateLabels = bookingStateLabels;

  protected readonly filter = signal<QueueFilter>(emptyQueueFilter);
  protected readonly sort = signal<Sort>(defaultQueueSort);

  private readonly items = computed(() => (this.queue.hasValue() ? this.queue.value() : []));
  /** The boards the queue's lines come from, for the board filter. */
  protected readonly boards = computed(() => {
    const byId = new Map<string, string>();
    for (const item of this.items()) byId.set(item.board.id, item.board.name);
    return [...byId].map(([id, name]) => ({ id, name }));
  });
  protected readonly rows = computed(() =>
    sortQueue(filterQueue(this.items(), this.filter()), this.sort()),
  );
  protected readonly isFiltered = computed(() => {
    const filter = this.filter();
    return (Object.keys(emptyQueueFilter) as (keyof QueueFilter)[]).some(
      (key) => key !== 'showBooked' && filter[key] !== emptyQueueFilter[key],
    );
  });
  protected readonly errorText = computed(() =>
    this.queue.error() ? problemMessage(this.queue.error()) : '',
  );

  protected readonly isBooked = isBooked;

  protected setFilter<K extends keyof QueueFilter>(key: K, value: QueueFilter[K]): void {
    this.filter.update((filter) => ({ ...filter, [key]: value }));
  }

  protected clearFilters(): void {
    this.filter.update((filter) => ({ ...emptyQueueFilter, showBooked: filter.showBooked }));
  }

  protected changeSort(sort: Sort): void {
    this.sort.set(sort.direction ? sort : defaultQueueSort);
  }

  protected inputValue(event: Event): string {
    return (event.target as HTMLInputElement).value;
  }
}
