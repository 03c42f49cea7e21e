import { HttpClient, HttpContext } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { AnnotationView, CreateAnnotation, UpdateAnnotation } from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../../../core/http-context-tokens';

/**
 * The annotations of a case over HTTP (server/src/modules/annotations/README.md). The viewer
 * tells a refusal in its own strip under the views, in the problem's words.
 */
@Injectable({ providedIn: 'root' })
export class AnnotationApi {
  private readonly http = inject(HttpClient);
  private readonly context = new HttpContext().set(SHOWS_OWN_ERRORS, true);

  /** Every annotation of the case (all its series), oldest first, each with `canEdit`. */
  list(caseId: string): Observable<AnnotationView[]> {
    return this.http.get<AnnotationView[]>(`/api/cases/${encodeURIComponent(caseId)}/annotations`, {
      context: this.context,
    });
  }

  create(caseId: string, body: CreateAnnotation): Observable<AnnotationView> {
    return this.http.post<AnnotationView>(
      `/api/cases/${encodeURIComponent(caseId)}/annotations`,
      body,
      { context: this.context },
    );
  }

  update(id: string, changes: UpdateAnnotation): Observable<AnnotationView> {
    return this.http.patch<AnnotationView>(`/api/annotations/${encodeURIComponent(id)}`, changes, {
      context: this.context,
    });
  }

  delete(id: string): Observable<null> {
    return this.http.delete<null>(`/api/annotations/${encodeURIComponent(id)}`, {
      context: this.context,
    });
  }
}
