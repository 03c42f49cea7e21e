import { HttpClient, HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { CreateKeyImage, KeyImageView } from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/**
 * Key images of a case (server/src/modules/key-images/README.md): the list (a resource; create
 * it in an injection context, idle while the case id is undefined), keeping one (multipart: the
 * PNG in `image`, the description in `meta`) and removing one. Callers show errors themselves.
 */
@Injectable({ providedIn: 'root' })
export class KeyImageApi {
  private readonly http = inject(HttpClient);
  private readonly ownErrors = () => new HttpContext().set(SHOWS_OWN_ERRORS, true);

  list(caseId: () => string | undefined): HttpResourceRef<KeyImageView[] | undefined> {
    return httpResource<KeyImageView[]>(() => {
      const id = caseId();
      return id
        ? { url: `/api/cases/${encodeURIComponent(id)}/key-images`, context: this.ownErrors() }
        : undefined;
    });
  }

  keep(caseId: string, png: Blob, meta: CreateKeyImage): Observable<KeyImageView> {
    const form = new FormData();
    form.append('image', png, 'view.png');
    form.append('meta', JSON.stringify(meta));
    return this.http.post<KeyImageView>(
      `/api/cases/${encodeURIComponent(caseId)}/key-images`,
      form,
      { context: this.ownErrors() },
    );
  }

  remove(keyImageId: string): Observable<null> {
    return this.http.delete<null>(`/api/key-images/${encodeURIComponent(keyImageId)}`, {
      context: this.ownErrors(),
    });
  }
}
