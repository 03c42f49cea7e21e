import {
  HttpClient,
  HttpContext,
  httpResource,
  type HttpEvent,
  type HttpResourceRef,
  type HttpResponse,
} from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type {
  SeriesRemovalView,
  ImageSeriesView,
  KeepUploadRequest,
  UploadListing,
  UploadProgress,
} from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/** A file to upload and the name it travels under: its path within a chosen folder, or its name. */
export interface UploadFile {
  file: File;
  /** "study/series-4/IM0001" for a file of a folder, else the file's own name. */
  path: string;
}

/** The answer of an upload: one series stored at once (201), or several to choose from (202). */
export type UploadAnswer =
  { kind: 'stored'; series: ImageSeriesView } | { kind: 'listing'; listing: UploadListing };

/**
 * Tells the two answers of an upload apart by their status, as the contract defines them:
 * 201 Created carries the stored series, 202 Accepted the listing that waits for a choice.
 */
export function uploadAnswer(
  response: HttpResponse<ImageSeriesView | UploadListing>,
): UploadAnswer {
  const body = response.body;
  if (!body) throw new Error(`The upload answered ${response.status} without a body.`);
  return response.status === 202
    ? { kind: 'listing', listing: body as UploadListing }
    : { kind: 'stored', series: body as ImageSeriesView };
}

/**
 * The imaging API: a case's series as a resource; the upload as a stream of HTTP events, the
 * choice among the series of a whole study (keep or discard), and the server's progress.
 */
@Injectable({ providedIn: 'root' })
export class SeriesApi {
  private readonly http = inject(HttpClient);

  /** What goes with a series if it is removed, and what blocks its removal. */
  removal(seriesId: string): Observable<SeriesRemovalView> {
    return this.http.get<SeriesRemovalView>(`/api/series/${encodeURIComponent(seriesId)}/removal`);
  }

  /** Removes a series with its structures, label map, annotations and plans (204). */
  remove(seriesId: string): Observable<null> {
    return this.http.delete<null>(`/api/series/${encodeURIComponent(seriesId)}`);
  }

  /** The series of a case, oldest first; idle while the id is undefined. */
  list(caseId: () => string | undefined): HttpResourceRef<ImageSeriesView[] | undefined> {
    return httpResource<ImageSeriesView[]>(() => {
      const id = caseId();
      return id ? `/api/cases/${encodeURIComponent(id)}/series` : undefined;
    });
  }

  /**
   * Sends DICOM files (or one zip, or the files of a folder with their relative paths as the
   * file names) in the field `files`. The events include upload progress, so that the transfer
   * can be shown apart from the server's reading; `progressToken` names the server's progress
   * (`progress`). The answer's status tells one stored series from a listing (`uploadAnswer`).
   */
  upload(
    caseId: string,
    files: readonly UploadFile[],
    progressToken: string,
  ): Observable<HttpEvent<ImageSeriesView | UploadListing>> {
    const body = new FormData();
    for (const { file, path } of files) body.append('files', file, path);
    return this.http.post<ImageSeriesView | UploadListing>(
      `/api/cases/${encodeURIComponent(caseId)}/series`,
      body,
      {
        params: { progress: progressToken },
        reportProgress: true,
        observe: 'events',
        // The upload panel shows the refusal itself, with the files still chosen.
        context: shownBeside(),
      },
    );
  }

  /** How far the server is with the upload or keep that sent `token` (404 before it starts). */
  progress(token: string): Observable<UploadProgress> {
    // A 404 is expected before the server starts reading: no snack bar for it.
    return this.http.get<UploadProgress>(`/api/upload-progress/${encodeURIComponent(token)}`, {
      context: shownBeside(),
    });
  }

  /** Stores the chosen series of a listing; 404 once the server has forgotten the upload. */
  keep(
    uploadId: string,
    keys: readonly string[],
    progressToken: string,
  ): Observable<ImageSeriesView[]> {
    const body: KeepUploadRequest = { keys: [...keys] };
    return this.http.post<ImageSeriesView[]>(
      `/api/uploads/${encodeURIComponent(uploadId)}/keep`,
      body,
      { params: { progress: progressToken }, context: shownBeside() },
    );
  }

  /** Forgets an upload without keeping any of its series. */
  discard(uploadId: string): Observable<null> {
    return this.http.delete<null>(`/api/uploads/${encodeURIComponent(uploadId)}`, {
      context: shownBeside(),
    });
  }
}

/** The panel that sent the request tells its error beside the control: no snack bar. */
function shownBeside(): HttpContext {
  return new HttpContext().set(SHOWS_OWN_ERRORS, true);
}
