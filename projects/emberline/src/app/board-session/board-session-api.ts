import { HttpClient, HttpContext } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { CommentView, MinutesView, TallyView } from '@emberline/shared';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/** The board session's reads over HTTP: what a page reads back after a resync, and the minutes. */
@Injectable({ providedIn: 'root' })
export class BoardSessionApi {
  private readonly http = inject(HttpClient);

  tally(agendaItemId: string) {
    return this.http.get<TallyView>(`/api/agenda-items/${encodeURIComponent(agendaItemId)}/tally`, {
      context: ownErrors(),
    });
  }

  comments(agendaItemId: string) {
    return this.http.get<CommentView[]>(
      `/api/agenda-items/${encodeURIComponent(agendaItemId)}/comments`,
      { context: ownErrors() },
    );
  }

  markComment(commentId: string, isForMinutes: boolean) {
    return this.http.patch<CommentView>(
      `/api/comments/${encodeURIComponent(commentId)}`,
      { isForMinutes },
      { context: ownErrors() },
    );
  }

  close(meetingId: string) {
    return this.http.post<MinutesView>(
      `/api/meetings/${encodeURIComponent(meetingId)}/close`,
      {},
      { context: ownErrors() },
    );
  }

  minutes(meetingId: string) {
    return this.http.get<MinutesView>(`/api/meetings/${encodeURIComponent(meetingId)}/minutes`, {
      context: ownErrors(),
    });
  }
}

function ownErrors(): HttpContext {
  return new HttpContext().set(SHOWS_OWN_ERRORS, true);
}
