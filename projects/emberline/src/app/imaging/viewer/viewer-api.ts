import { HttpClient, HttpContext, HttpErrorResponse } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import {
  decodeLabelMapFile,
  decodeVolumeFile,
  type ImageSeriesView,
  type StructureView,
  type VolumeGeometry,
} from '@emberline/shared';
import { catchError, map, of, throwError, type Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../../core/http-context-tokens';
import type { ViewerLabelMap, ViewerVolume } from './viewer-data';

/** What the viewer reads: the series, its voxels and its label map, decoded to plain arrays. */
@Injectable({ providedIn: 'root' })
export class ViewerApi {
  private readonly http = inject(HttpClient);
  /** The viewer tells a failed load on the page itself. */
  private readonly context = new HttpContext().set(SHOWS_OWN_ERRORS, true);

  series(seriesId: string): Observable<ImageSeriesView> {
    return this.http.get<ImageSeriesView>(`/api/series/${encodeURIComponent(seriesId)}`, {
      context: this.context,
    });
  }

  structures(seriesId: string): Observable<StructureView[]> {
    return this.http.get<StructureView[]>(
      `/api/series/${encodeURIComponent(seriesId)}/structures`,
      { context: this.context },
    );
  }

  volume(seriesId: string): Observable<ViewerVolume> {
    return this.http
      .get(`/api/series/${encodeURIComponent(seriesId)}/volume`, {
        responseType: 'arraybuffer',
        context: this.context,
      })
      .pipe(
        catchError(readableProblem),
        map((body) => {
          const { header, voxels } = decodeVolumeFile(body);
          const geometry: VolumeGeometry = {
            dimensions: header.dimensions,
            spacingMm: header.spacingMm,
            originLps: header.originLps,
            direction: header.direction,
          };
          return { geometry, voxels, valueUnit: header.valueUnit, valueRange: header.valueRange };
        }),
      );
  }

  /** The label map, or null when no structures were imported for the series (404). */
  labelMap(seriesId: string): Observable<ViewerLabelMap | null> {
    return this.http
      .get(`/api/series/${encodeURIComponent(seriesId)}/label-map`, {
        responseType: 'arraybuffer',
        context: this.context,
      })
      .pipe(
        catchError(readableProblem),
        map((body): ViewerLabelMap | null => {
          const { header, labels } = decodeLabelMapFile(body);
          return { labels, labelValues: header.labelValues };
        }),
        catchError((error: unknown) =>
          error instanceof HttpErrorResponse && error.status === 404
            ? of(null)
            : throwError(() => error),
        ),
      );
  }
}

/**
 * A binary request's error body arrives as bytes: parse it as the problem details (RFC 9457)
 * it is, so that the page can tell the server's sentence.
 */
export function readableProblem(error: unknown): Observable<never> {
  if (error instanceof HttpErrorResponse && error.error instanceof ArrayBuffer) {
    let body: unknown = null;
    try {
      body = JSON.parse(new TextDecoder().decode(error.error));
    } catch {
      body = null;
    }
    return throwError(
      () =>
        new HttpErrorResponse({
          error: body,
          status: error.status,
          statusText: error.statusText,
          url: error.url ?? undefined,
        }),
    );
  }
  return throwError(() => error);
}
