import { HttpClient, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type {
  AdminUserView,
  AuditAction,
  AuditEventView,
  BoardView,
  Page,
  Role,
  RolePolicyView,
  Specialty,
} from '@emberline/shared';
import type { Observable } from 'rxjs';

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
