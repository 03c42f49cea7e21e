import { HttpClient, HttpContext } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import {
  decodeAssessmentDisplay,
  type AssessmentDisplay,
  type SafetyProfileView,
} from '@emberline/shared';
import { catchError, map, type Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../../../core/http-context-tokens';
import { readableProblem } from '../viewer-api';

/** What the viewer reads of an assessment to draw it: the zone masks and the local margins. */
@Injectable({ providedIn: 'root' })
export class ZoneDisplayApi {
  private readonly http = inject(HttpClient);
  /** The zone panel tells a failed load itself. */
  private readonly context = new HttpContext().set(SHOWS_OWN_ERRORS, true);

  /** The display body of a done assessment (404 until it is done), decoded. */
  display(assessmentId: string): Observable<AssessmentDisplay> {
    return this.http
      .get(`/api/assessments/${encodeURIComponent(assessmentId)}/display`, {
        responseType: 'arraybuffer',
        context: this.context,
      })
      .pipe(
        catchError(readableProblem),
        map((body) => decodeAssessmentDisplay(body)),
      );
  }

  /** The default safety profile, for its margin target when no verdict reason names it. */
  defaultSafetyProfile(): Observable<SafetyProfileView> {
    return this.http.get<SafetyProfileView>('/api/safety-profiles/default', {
      context: this.context,
    });
  }
}
