import { HttpClient, HttpContext } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { CaseDetail, RehearsalSettings, UpdateCaseRequest } from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../../core/http-context-tokens';

/**
 * The case's insertion-rehearsal settings over HTTP: a PATCH of the case that changes nothing
 * else. The panel shows a refusal beside its own fields, so no snack bar repeats it.
 */
@Injectable({ providedIn: 'root' })
export class RehearsalSettingsApi {
  private readonly http = inject(HttpClient);

  /** Sets the case's own settings, or (null) sends it back to the defaults; answers the case. */
  save(caseId: string, rehearsal: RehearsalSettings | null): Observable<CaseDetail> {
    const body: UpdateCaseRequest = { rehearsal };
    return this.http.patch<CaseDetail>(`/api/cases/${encodeURIComponent(caseId)}`, body, {
      context: new HttpContext().set(SHOWS_OWN_ERRORS, true),
    });
  }
}
