import { HttpClient, HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { StructureKind, StructureLabels, StructureView } from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/** The structures of a series: list as a resource, import and remap as requests. */
@Injectable({ providedIn: 'root' })
export class StructureApi {
  private readonly http = inject(HttpClient);

  /** The structures of a series; idle while the id is undefined. */
  list(seriesId: () => string | undefined): HttpResourceRef<StructureView[] | undefined> {
    return httpResource<StructureView[]>(() => {
      const id = seriesId();
      return id ? `/api/series/${encodeURIComponent(id)}/structures` : undefined;
    });
  }

  /** Imports a NIfTI-1 label map; `labels` is left out when no label is mapped. */
  importLabelMap(
    seriesId: string,
    file: File,
    labels: StructureLabels,
  ): Observable<StructureView[]> {
    const body = new FormData();
    body.append('file', file, file.name);
    if (Object.keys(labels).length) body.append('labels', JSON.stringify(labels));
    return this.http.post<StructureView[]>(
      `/api/series/${encodeURIComponent(seriesId)}/structures`,
      body,
      { context: shownBeside() },
    );
  }

  remap(structureId: string, kind: StructureKind, name?: string): Observable<StructureView> {
    return this.http.patch<StructureView>(
      `/api/structures/${encodeURIComponent(structureId)}`,
      name === undefined ? { kind } : { kind, name },
      { context: shownBeside() },
    );
  }
}

/** The panel that sent the request tells its error beside the control: no snack bar. */
function shownBeside(): HttpContext {
  return new HttpContext().set(SHOWS_OWN_ERRORS, true);
}
