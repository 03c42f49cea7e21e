import type { Sort } from '@angular/material/sort';
import {
  bookingUrgencies,
  type BookingQueueItem,
  type BookingQueueKind,
  type BookingUrgency,
  type Treatment,
} from '@emberline/shared';

/** The queue's filters; an empty value lets every line through. */
export interface QueueFilter {
  boardId: string;
  urgency: BookingUrgency | '';
  kind: BookingQueueKind | '';
  outcome: Treatment | '';
  /** Decided on or after this day (`YYYY-MM-DD`, the browser's local day). */
  decidedFrom: string;
  /** Decided on or before this day. */
  decidedTo: string;
  /** Lines that already have a booking are shown too. */
  showBooked: boolean;
}

export const emptyQueueFilter: QueueFilter = {
  boardId: '',
  urgency: '',
  kind: '',
  outcome: '',
  decidedFrom: '',
  decidedTo: '',
  showBooked: false,
};

/** The columns the queue sorts by. */
export const queueSortColumns = [
  'caseCode',
  'board',
  'kind',
  'outcome',
  'urgency',
  'decisionSignedAt',
  'booking',
] as const;

/** Default order: the most urgent first, then the longest waiting. */
export const defaultQueueSort: Sort = { active: 'urgency', direction: 'desc' };

export function filterQueue(
  items: readonly BookingQueueItem[],
  filter: QueueFilter,
): BookingQueueItem[] {
  return items.filter(
    (item) =>
      (!filter.boardId || item.board.id === filter.boardId) &&
      (!filter.urgency || item.urgency === filter.urgency) &&
      (!filter.kind || item.kind === filter.kind) &&
      (!filter.outcome || item.outcome === filter.outcome) &&
      (!filter.decidedFrom || localDay(item.decisionSignedAt) >= filter.decidedFrom) &&
      (!filter.decidedTo || localDay(item.decisionSignedAt) <= filter.decidedTo) &&
      (filter.showBooked || !isBooked(item)),
  );
}

/** A line whose procedure or follow-up has a live booking (booked or confirmed). */
export function isBooked(item: BookingQueueItem): boolean {
  return !!item.booking && (item.booking.state === 'booked' || item.booking.state === 'confirmed');
}

/**
 * Sorts a copy of the lines by a column. Ties keep the longest waiting first (the oldest
 * decision), so the order is stable whatever the server sent.
 */
export function sortQueue(items: readonly BookingQueueItem[], sort: Sort): BookingQueueItem[] {
  const direction = sort.direction === 'desc' ? -1 : 1;
  const key = sortKeys[sort.active as (typeof queueSortColumns)[number]] ?? sortKeys.urgency;
  return [...items].sort((a, b) => {
    const primary = compare(key(a), key(b)) * (sort.direction ? direction : 1);
    return primary || compare(a.decisionSignedAt, b.decisionSignedAt);
  });
}

const sortKeys: Record<
  (typeof queueSortColumns)[number],
  (item: BookingQueueItem) => string | number
> = {
  caseCode: (item) => item.caseCode,
  board: (item) => item.board.name,
  kind: (item) => item.kind,
  outcome: (item) => item.outcome,
  // routine < priority < urgent: descending puts the urgent first.
  urgency: (item) => bookingUrgencies.indexOf(item.urgency),
  decisionSignedAt: (item) => item.decisionSignedAt,
  // Unbooked lines sort before every booked date.
  booking: (item) => item.booking?.startsAt ?? '',
};

function compare(a: string | number, b: string | number): number {
  if (typeof a === 'number' && typeof b === 'number') return a - b;
  return String(a).localeCompare(String(b));
}

/** The browser's local day of an instant, as `YYYY-MM-DD`. */
export function localDay(iso: string): string {
  const date = new Date(iso);
  const month = String(date.getMonth() + 1).padStart(2, '0');
  const day = String(date.getDate()).padStart(2, '0');
  return `${String(date.getFullYear())}-${month}-${day}`;
}
