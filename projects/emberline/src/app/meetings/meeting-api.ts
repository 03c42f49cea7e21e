import { HttpClient, HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { CreateMeeting, MeetingSummary, MeetingView } from '@emberline/shared';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/** Board meetings and their agendas (resources must be created in an injection context). */
@Injectable({ providedIn: 'root' })
export class MeetingApi {
  private readonly http = inject(HttpClient);

  /** The meetings of every board the user belongs to, oldest first. */
  myMeetings(): HttpResourceRef<MeetingSummary[] | undefined> {
    return httpResource<MeetingSummary[]>(() => '/api/meetings');
  }

  boardMeetings(boardId: () => string | undefined): HttpResourceRef<MeetingSummary[] | undefined> {
    return httpResource<MeetingSummary[]>(() => {
      const id = boardId();
      return id ? `/api/boards/${encodeURIComponent(id)}/meetings` : undefined;
    });
  }

  meeting(meetingId: () => string | undefined): HttpResourceRef<MeetingView | undefined> {
    return httpResource<MeetingView>(() => {
      const id = meetingId();
      return id ? `/api/meetings/${encodeURIComponent(id)}` : undefined;
    });
  }

  schedule(boardId: string, body: CreateMeeting) {
    return this.http.post<MeetingView>(
      `/api/boards/${encodeURIComponent(boardId)}/meetings`,
      body,
      { context: ownErrors() },
    );
  }

  addToAgenda(meetingId: string, caseId: string) {
    return this.http.post<MeetingView>(
      `/api/meetings/${encodeURIComponent(meetingId)}/agenda`,
      { caseId },
      { context: ownErrors() },
    );
  }

  orderAgenda(meetingId: string, itemIds: string[]) {
    return this.http.put<MeetingView>(
      `/api/meetings/${encodeURIComponent(meetingId)}/agenda/order`,
      { itemIds },
      { context: ownErrors() },
    );
  }

  moveItem(itemId: string, meetingId: string) {
    return this.http.post<MeetingView>(
      `/api/agenda-items/${encodeURIComponent(itemId)}/move`,
      { meetingId },
      { context: ownErrors() },
    );
  }
}

/** Every write of meetings shows its error beside the control it came from: no snack bar. */
function ownErrors(): HttpContext {
  return new HttpContext().set(SHOWS_OWN_ERRORS, true);
}
