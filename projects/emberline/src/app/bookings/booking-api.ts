import { HttpClient, HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type {
  BookingQueueItem,
  CancelBooking,
  CaseLogisticsView,
  ChecklistItemKey,
  CreateBooking,
  CreateFollowUp,
  RecordTreatment,
  UpdateBooking,
} from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS, handledByCaller } from '../core/http-context-tokens';

/**
 * The logistics API (shared/src/api/bookings.ts). Reads are resources that show their own load
 * errors; every write shows its refusal beside the control it came from (`handledByCaller`), and
 * the screen reads the case's logistics again afterwards, so that what is shown is what the
 * server holds.
 */
@Injectable({ providedIn: 'root' })
export class BookingApi {
  private readonly http = inject(HttpClient);

  /** The coordinator's whole queue, booked lines included; the page filters and sorts it. */
  queue(): HttpResourceRef<BookingQueueItem[] | undefined> {
    return httpResource<BookingQueueItem[]>(() => ({
      url: '/api/bookings/queue',
      params: { includeBooked: 'true' },
      context: new HttpContext().set(SHOWS_OWN_ERRORS, true),
    }));
  }

  /** Everything of a case's Logistics section; idle while the id is undefined. */
  logistics(caseId: () => string | undefined): HttpResourceRef<CaseLogisticsView | undefined> {
    return httpResource<CaseLogisticsView>(() => {
      const id = caseId();
      return id
        ? {
            url: `${caseUrl(id)}/logistics`,
            context: new HttpContext().set(SHOWS_OWN_ERRORS, true),
          }
        : undefined;
    });
  }

  book(caseId: string, body: CreateBooking): Observable<unknown> {
    return this.http.post(`${caseUrl(caseId)}/booking`, body, { context: handledByCaller() });
  }

  rebook(caseId: string, body: UpdateBooking): Observable<unknown> {
    return this.http.patch(`${caseUrl(caseId)}/booking`, body, { context: handledByCaller() });
  }

  cancel(caseId: string, body: CancelBooking): Observable<unknown> {
    return this.http.delete(`${caseUrl(caseId)}/booking`, { body, context: handledByCaller() });
  }

  bookFollowUp(caseId: string, body: CreateFollowUp): Observable<unknown> {
    return this.http.post(`${caseUrl(caseId)}/follow-up`, body, { context: handledByCaller() });
  }

  cancelFollowUp(caseId: string, body: CancelBooking): Observable<unknown> {
    return this.http.delete(`${caseUrl(caseId)}/follow-up`, { body, context: handledByCaller() });
  }

  tick(bookingId: string, key: ChecklistItemKey, isMet: boolean): Observable<unknown> {
    return this.http.put(
      `${bookingUrl(bookingId)}/checklist/${encodeURIComponent(key)}`,
      { isMet },
      { context: handledByCaller() },
    );
  }

  override(bookingId: string, key: ChecklistItemKey, reason: string): Observable<unknown> {
    return this.http.post(
      `${bookingUrl(bookingId)}/checklist/${encodeURIComponent(key)}/override`,
      { reason },
      { context: handledByCaller() },
    );
  }

  /** Answers 409 while the checklist is incomplete; the problem says which items are open. */
  confirm(bookingId: string): Observable<unknown> {
    return this.http.post(`${bookingUrl(bookingId)}/confirm`, {}, { context: handledByCaller() });
  }

  recordTreatment(caseId: string, body: RecordTreatment): Observable<unknown> {
    return this.http.post(`${caseUrl(caseId)}/treatment`, body, { context: handledByCaller() });
  }
}

function caseUrl(caseId: string): string {
  return `/api/cases/${encodeURIComponent(caseId)}`;
}

function bookingUrl(bookingId: string): string {
  return `/api/bookings/${encodeURIComponent(bookingId)}`;
}
