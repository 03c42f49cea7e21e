import { HttpClient, HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type {
  AdminUserView,
  ApplicatorProfileView,
  AuditAction,
  AuditEventView,
  BoardView,
  CreateApplicatorProfile,
  Page,
  Role,
  RolePolicyView,
  SafetyProfileBody,
  SafetyProfileView,
  Specialty,
  ThresholdKey,
  ThresholdView,
  UpdateApplicatorProfile,
  UpdateThreshold,
} from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

export interface AuditQuery {
  page: number;
  size: number;
  action?: AuditAction;
  actor?: string;
  entityId?: string;
  /** ISO 8601 date-times with an offset. */
  from?: string;
  to?: string;
}

export interface NewUser {
  email: string;
  displayName: string;
  roles: Role[];
  password?: string;
}

export interface UserChange {
  displayName?: string;
  roles?: Role[];
  isActive?: boolean;
}

/** Administration API (administrators only; the server refuses everyone else). */
@Injectable({ providedIn: 'root' })
export class AdminApi {
  private readonly http = inject(HttpClient);

  users(): HttpResourceRef<AdminUserView[] | undefined> {
    return httpResource<AdminUserView[]>(() => '/api/admin/users');
  }

  createUser(body: NewUser): Observable<AdminUserView> {
    return this.http.post<AdminUserView>('/api/admin/users', body);
  }

  updateUser(userId: string, body: UserChange): Observable<AdminUserView> {
    return this.http.patch<AdminUserView>(`/api/admin/users/${encodeURIComponent(userId)}`, body);
  }

  boards(): HttpResourceRef<BoardView[] | undefined> {
    return httpResource<BoardView[]>(() => '/api/admin/boards');
  }

  createBoard(body: { name: string; description: string }): Observable<BoardView> {
    return this.http.post<BoardView>('/api/admin/boards', body);
  }

  addMember(boardId: string, userId: string, specialty: Specialty): Observable<null> {
    return this.http.post<null>(`/api/admin/boards/${encodeURIComponent(boardId)}/members`, {
      userId,
      specialty,
    });
  }

  setQuorum(
    boardId: string,
    requiredSpecialties: Specialty[],
  ): Observable<{ requiredSpecialties: Specialty[] }> {
    return this.http.put<{ requiredSpecialties: Specialty[] }>(
      `/api/admin/boards/${encodeURIComponent(boardId)}/quorum`,
      { requiredSpecialties },
      { context: shownBeside() },
    );
  }

  removeMember(boardId: string, userId: string): Observable<null> {
    return this.http.delete<null>(
      `/api/admin/boards/${encodeURIComponent(boardId)}/members/${encodeURIComponent(userId)}`,
    );
  }

  rolePolicies(): HttpResourceRef<RolePolicyView[] | undefined> {
    return httpResource<RolePolicyView[]>(() => '/api/admin/role-policies');
  }

  setRolePolicy(role: Role, requiresTotp: boolean): Observable<RolePolicyView> {
    return this.http.put<RolePolicyView>(`/api/admin/role-policies/${encodeURIComponent(role)}`, {
      requiresTotp,
    });
  }

  /** Every applicator profile, the retired ones too. */
  applicatorProfiles(): HttpResourceRef<ApplicatorProfileView[] | undefined> {
    return httpResource<ApplicatorProfileView[]>(() => '/api/admin/applicator-profiles');
  }

  createApplicatorProfile(body: CreateApplicatorProfile): Observable<ApplicatorProfileView> {
    return this.http.post<ApplicatorProfileView>('/api/admin/applicator-profiles', body, {
      context: shownBeside(),
    });
  }

  /**
   * Changes the fields sent; `isRetired` retires the profile or puts it back in use. A change of
   * content to a version that assessments used makes the next version (the answer's `version`).
   */
  updateApplicatorProfile(
    profileId: string,
    body: UpdateApplicatorProfile,
  ): Observable<ApplicatorProfileView> {
    return this.http.patch<ApplicatorProfileView>(
      `/api/admin/applicator-profiles/${encodeURIComponent(profileId)}`,
      body,
      { context: shownBeside() },
    );
  }

  safetyProfiles(): HttpResourceRef<SafetyProfileView[] | undefined> {
    return httpResource<SafetyProfileView[]>(() => '/api/admin/safety-profiles');
  }

  createSafetyProfile(body: SafetyProfileBody): Observable<SafetyProfileView> {
    return this.http.post<SafetyProfileView>('/api/admin/safety-profiles', body, {
      context: shownBeside(),
    });
  }

  /**
   * Changes the fields sent and leaves the others; `isDefault: true` makes it the default. A
   * change to a version that assessments used makes the next version (the answer's `version`).
   */
  updateSafetyProfile(
    profileId: string,
    body: Partial<SafetyProfileBody>,
  ): Observable<SafetyProfileView> {
    return this.http.patch<SafetyProfileView>(
      `/api/admin/safety-profiles/${encodeURIComponent(profileId)}`,
      body,
      { context: shownBeside() },
    );
  }

  /** The pre-procedure checklist's laboratory and imaging thresholds, each with its source. */
  checklistThresholds(): HttpResourceRef<ThresholdView[] | undefined> {
    return httpResource<ThresholdView[]>(() => ({
      url: '/api/admin/checklist-thresholds',
      context: shownBeside(),
    }));
  }

  updateThreshold(key: ThresholdKey, body: UpdateThreshold): Observable<ThresholdView> {
    return this.http.put<ThresholdView>(
      `/api/admin/checklist-thresholds/${encodeURIComponent(key)}`,
      body,
      { context: shownBeside() },
    );
  }

  audit(query: () => AuditQuery): HttpResourceRef<Page<AuditEventView> | undefined> {
    return httpResource<Page<AuditEventView>>(() => {
      const { page, size, ...filters } = query();
      const params: Record<string, string | number> = { page, size };
      for (const [name, value] of Object.entries(filters)) {
        if (value) params[name] = value;
      }
      return { url: '/api/admin/audit', params };
    });
  }
}

/** The profile screens show a refusal beside the form or row it came from: no snack bar. */
function shownBeside(): HttpContext {
  return new HttpContext().set(SHOWS_OWN_ERRORS, true);
}
