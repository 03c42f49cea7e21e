import { HttpClient, HttpContext, HttpErrorResponse } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { RehearsalReplayView } from '@emberline/shared';
import { catchError, map, of, throwError, type Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../../../core/http-context-tokens';
import { ReplayDataError } from './rehearsal-frames';

/** The replays of an assessment's insertion rehearsal (`GET /api/assessments/:id/rehearsal`). */
@Injectable({ providedIn: 'root' })
export class RehearsalReplayApi {
  private readonly http = inject(HttpClient);
  /** The replay tells a failed load itself, beside the 3D view. */
  private readonly context = new HttpContext().set(SHOWS_OWN_ERRORS, true);

  /**
   * The replays with their caution; null when the assessment has none (the server answers 404:
   * assessed before the rehearsal existed, or rehearsal switched off). A body of another shape
   * fails with a `ReplayDataError`.
   */
  replays(assessmentId: string): Observable<RehearsalReplayView | null> {
    return this.http
      .get<unknown>(`/api/assessments/${encodeURIComponent(assessmentId)}/rehearsal`, {
        context: this.context,
      })
      .pipe(
        map(replayView),
        catchError((error: unknown) =>
          error instanceof HttpErrorResponse && error.status === 404
            ? of(null)
            : throwError(() => error),
        ),
      );
  }
}

function replayView(body: unknown): RehearsalReplayView {
  const view = body as Partial<RehearsalReplayView> | null;
  if (typeof view !== 'object' || view === null || !Array.isArray(view.replays)) {
    throw new ReplayDataError('The server’s rehearsal replay is not in the expected form.');
  }
  return { caution: typeof view.caution === 'string' ? view.caution : '', replays: view.replays };
}
