import { HttpClient, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type {
  CaseDetail,
  CaseListQuery,
  CaseSummary,
  CreateCaseRequest,
  CreateLabPanelRequest,
  CreateLesionRequest,
  Page,
  UpdateCaseRequest,
} from '@emberline/shared';
import type { Observable } from 'rxjs';

/** The cases API: reads as resources (call them in an injection context), writes as requests. */
@Injectable({ providedIn: 'root' })
export class CaseApi {
  private readonly http = inject(HttpClient);

  /** A page of the case register; asked again whenever the query changes. */
  register(query: () => CaseListQuery): HttpResourceRef<Page<CaseSummary> | undefined> {
    return httpResource<Page<CaseSummary>>(() => ({
      url: '/api/cases',
      params: registerParams(query()),
    }));
  }

  /** One case file; idle while the id is undefined. */
  detail(id: () => string | undefined): HttpResourceRef<CaseDetail | undefined> {
    return httpResource<CaseDetail>(() => {
      const caseId = id();
      return caseId ? `/api/cases/${encodeURIComponent(caseId)}` : undefined;
    });
  }

  create(body: CreateCaseRequest): Observable<CaseDetail> {
    return this.http.post<CaseDetail>('/api/cases', body);
  }

  update(caseId: string, body: UpdateCaseRequest): Observable<CaseDetail> {
    return this.http.patch<CaseDetail>(`/api/cases/${encodeURIComponent(caseId)}`, body);
  }

  remove(caseId: string): Observable<null> {
    return this.http.delete<null>(`/api/cases/${encodeURIComponent(caseId)}`);
  }

  addLesion(caseId: string, body: CreateLesionRequest): Observable<CaseDetail> {
    return this.http.post<CaseDetail>(`/api/cases/${encodeURIComponent(caseId)}/lesions`, body);
  }

  removeLesion(caseId: string, lesionId: string): Observable<CaseDetail> {
    return this.http.delete<CaseDetail>(
      `/api/cases/${encodeURIComponent(caseId)}/lesions/${encodeURIComponent(lesionId)}`,
    );
  }

  addLabPanel(caseId: string, body: CreateLabPanelRequest): Observable<CaseDetail> {
    return this.http.post<CaseDetail>(`/api/cases/${encodeURIComponent(caseId)}/lab-panels`, body);
  }
}

/** Query parameters of the register, leaving out empty filters. */
export function registerParams(query: CaseListQuery): Record<string, string | number> {
  const params: Record<string, string | number> = {
    page: query.page,
    size: query.size,
    sort: query.sort,
  };
  if (query.q) params['q'] = query.q;
  if (query.status) params['status'] = query.status;
  if (query.boardId) params['boardId'] = query.boardId;
  return params;
}
