import { HttpClient, HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { AmendDecision, DecisionView, RecordDecision } from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS, handledByCaller } from '../core/http-context-tokens';

/**
 * The board's signed decision on a case and its amendments. The read answers 404 while there is
 * no decision, which the section shows as such (no snack bar). The two signing requests answer
 * a refused signature with 401 (the password again, or a fresh hospital sign-on): the form
 * explains it, so those requests must not end the session as an unexpected 401 would.
 */
@Injectable({ providedIn: 'root' })
export class DecisionApi {
  private readonly http = inject(HttpClient);

  /** The decision of a case; idle while the id is undefined. */
  decision(caseId: () => string | undefined): HttpResourceRef<DecisionView | undefined> {
    return httpResource<DecisionView>(() => {
      const id = caseId();
      return id
        ? {
            url: decisionUrl(id),
            context: new HttpContext().set(SHOWS_OWN_ERRORS, true),
          }
        : undefined;
    });
  }

  record(caseId: string, body: RecordDecision): Observable<DecisionView> {
    return this.http.post<DecisionView>(decisionUrl(caseId), body, { context: handledByCaller() });
  }

  amend(caseId: string, body: AmendDecision): Observable<DecisionView> {
    return this.http.post<DecisionView>(`${decisionUrl(caseId)}/amendments`, body, {
      context: handledByCaller(),
    });
  }
}

function decisionUrl(caseId: string): string {
  return `/api/cases/${encodeURIComponent(caseId)}/decision`;
}
