import {
  HttpClient,
  HttpContext,
  httpResource,
  type HttpEvent,
  type HttpResourceRef,
} from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { ImageSeriesView } from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/** The imaging API: a case's series as a resource, the upload as a stream of HTTP events. */
@Injectable({ providedIn: 'root' })
export class SeriesApi {
  private readonly http = inject(HttpClient);

  /** The series of a case, oldest first; idle while the id is undefined. */
  list(caseId: () => string | undefined): HttpResourceRef<ImageSeriesView[] | undefined> {
    return httpResource<ImageSeriesView[]>(() => {
      const id = caseId();
      return id ? `/api/cases/${encodeURIComponent(id)}/series` : undefined;
    });
  }

  /**
   * Sends DICOM files (or one zip) in the field `files`. The events include upload progress,
   * so that the transfer can be shown apart from the server's reading of the series.
   */
  upload(caseId: string, files: readonly File[]): Observable<HttpEvent<ImageSeriesView>> {
    const body = new FormData();
    for (const file of files) body.append('files', file, file.name);
    return this.http.post<ImageSeriesView>(
      `/api/cases/${encodeURIComponent(caseId)}/series`,
      body,
      {
        reportProgress: true,
        observe: 'events',
        // The upload panel shows the refusal itself, with the files still chosen.
        context: new HttpContext().set(SHOWS_OWN_ERRORS, true),
      },
    );
  }
}
