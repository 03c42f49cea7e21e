import { HttpClient, HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type {
  StructureImportResult,
  StructureKind,
  StructureLabels,
  StructureView,
} from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/** The structures of a series: list as a resource; import, remap and lesion links as requests. */
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

  /**
   * Imports a label map (NIfTI-1 or DICOM SEG); `labels` is left out when no label is mapped.
   * Answers the series' structures and the SEG overlaps the server resolved.
   */
  importLabelMap(
    seriesId: string,
    file: File,
    labels: StructureLabels,
  ): Observable<StructureImportResult> {
    const body = new FormData();
    body.append('file', file, file.name);
    if (Object.keys(labels).length) body.append('labels', JSON.stringify(labels));
    return this.http.post<StructureImportResult>(
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

  /** Renames a structure (trimmed, 1–80 characters, one name per series: 409 otherwise). */
  rename(structureId: string, name: string): Observable<StructureView> {
    return this.http.patch<StructureView>(
      `/api/structures/${encodeURIComponent(structureId)}`,
      { name },
      { context: shownBeside() },
    );
  }

  /** Confirms a tumour's lesion: a lesion of the case, or null for none of them. */
  confirmLesion(structureId: string, lesionId: string | null): Observable<StructureView> {
    return this.http.patch<StructureView>(
      `/api/structures/${encodeURIComponent(structureId)}`,
      { lesionId, isLesionConfirmed: true },
      { context: shownBeside() },
    );
  }

  /** Releases a confirmed link: the tumour takes the server's suggestion again. */
  releaseLesion(structureId: string): Observable<StructureView> {
    return this.http.patch<StructureView>(
      `/api/structures/${encodeURIComponent(structureId)}`,
      { isLesionConfirmed: false },
      { context: shownBeside() },
    );
  }
}

/** The panel that sent the request tells its error beside the control: no snack bar. */
function shownBeside(): HttpContext {
  return new HttpContext().set(SHOWS_OWN_ERRORS, true);
}
