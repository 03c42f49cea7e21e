import { HttpClient, HttpContext } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { AssessmentView, RequestAssessment } from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/**
 * Plan assessments over HTTP. Every caller shows its own error beside the plan it
 * concerns (a progress poll every 2 s must not raise a snack bar each time).
 */
@Injectable({ providedIn: 'root' })
export class AssessmentApi {
  private readonly http = inject(HttpClient);

  /**
   * Queues an assessment of the plan (202), against the default safety profile unless
   * `safetyProfileId` names another. A plan whose inputs have not changed answers its existing
   * assessment, which may already be done.
   */
  request(planId: string, body: RequestAssessment = {}): Observable<AssessmentView> {
    return this.http.post<AssessmentView>(
      `/api/plans/${encodeURIComponent(planId)}/assessments`,
      body,
      { context: shownBeside() },
    );
  }

  /** The plan's assessments, newest first. */
  listForPlan(planId: string): Observable<AssessmentView[]> {
    return this.http.get<AssessmentView[]>(`/api/plans/${encodeURIComponent(planId)}/assessments`, {
      context: shownBeside(),
    });
  }

  get(assessmentId: string): Observable<AssessmentView> {
    return this.http.get<AssessmentView>(`/api/assessments/${encodeURIComponent(assessmentId)}`, {
      context: shownBeside(),
    });
  }
}

function shownBeside(): HttpContext {
  return new HttpContext().set(SHOWS_OWN_ERRORS, true);
}
