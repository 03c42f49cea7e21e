import { HttpClient, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type {
  CaseDetail,
  CaseListQuery,
  CaseSummary,
  CreateCaseRequest,
  CreateLabPanelRequest,
  CorrectLabPanelRequest,
  CreateLesionRequest,
  Page,
  UpdateCaseRequest,
  UpdateLesionRequest,
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

  updateLesion(
    caseId: string,
    lesionId: string,
    body: UpdateLesionRequest,
  ): Observable<CaseDetail> {
    return this.http.patch<CaseDetail>(
      `/api/cases/${encodeURIComponent(caseId)}/lesions/${encodeURIComponent(lesionId)}`,
      body,
    );
  }

  addLabPanel(caseId: string, body: CreateLabPanelRequest): Observable<CaseDetail> {
    return this.http.post<CaseDetail>(`/api/cases/${encodeURIComponent(caseId)}/lab-panels`, body);
  }

  /** The corrected panel supersedes `panelId`; both stay in the history. */
  correctLabPanel(
    caseId: string,
    panelId: string,
    body: CorrectLabPanelRequest,
  ): Observable<CaseDetail> {
    return this.http.post<CaseDetail>(
      `/api/cases/${encodeURIComponent(caseId)}/lab-panels/${encodeURIComponent(panelId)}/correction`,
      body,
    );
  }

  /** Marks `panelId` withdrawn (kept in the history). */
  withdrawLabPanel(caseId: string, panelId: string, reason: string): Observable<CaseDetail> {
    return this.http.post<CaseDetail>(
      `/api/cases/${encodeURIComponent(caseId)}/lab-panels/${encodeURIComponent(panelId)}/withdrawal`,
      { reason },
    );
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
