import { HttpClient, HttpContext, HttpErrorResponse } from '@angular/common/http';
import { Injectable, computed, inject, signal } from '@angular/core';
import type { CurrentUser, LoginRequest, Role, TotpSetup } from '@emberline/shared';
import { firstValueFrom, tap, type Observable } from 'rxjs';
import { EXPECTS_UNAUTHENTICATED, handledByCaller } from './http-context-tokens';

/**
 * Who is signed in. Asks the server once per page load (`GET /api/auth/me`) and keeps the answer;
 * sign-in, TOTP enrolment and sign-out replace it.
 */
@Injectable({ providedIn: 'root' })
export class AuthSession {
  private readonly http = inject(HttpClient);
  /** undefined: not asked yet; null: nobody signed in. */
  private readonly current = signal<CurrentUser | null | undefined>(undefined);
  private probe: Promise<CurrentUser | null> | null = null;

  readonly user = this.current.asReadonly();
  readonly roles = computed<readonly Role[]>(() => this.current()?.roles ?? []);
  readonly isAdministrator = computed(() => this.roles().includes('administrator'));

  hasRole(...allowed: Role[]): boolean {
    return this.roles().some((role) => allowed.includes(role));
  }

  /** The signed-in user, or null. A failure other than 401 is not remembered: the next call asks again. */
  load(): Promise<CurrentUser | null> {
    const known = this.current();
    if (known !== undefined) return Promise.resolve(known);
    this.probe ??= firstValueFrom(
      this.http.get<CurrentUser>('/api/auth/me', {
        context: new HttpContext().set(EXPECTS_UNAUTHENTICATED, true),
      }),
    ).then(
      (user) => {
        this.current.set(user);
        return user;
      },
      (error: unknown) => {
        this.probe = null;
        if (error instanceof HttpErrorResponse && error.status === 401) {
          this.current.set(null);
        }
        return null;
      },
    );
    return this.probe;
  }

  /** Local sign-in; the caller shows refusals (wrong password, code needed, too many attempts). */
  signIn(request: LoginRequest): Observable<CurrentUser> {
    return this.http
      .post<CurrentUser>('/api/auth/login', request, { context: handledByCaller() })
      .pipe(tap((user) => this.replace(user)));
  }

  signOut(): Observable<null> {
    return this.http
      .post<null>('/api/auth/logout', null, { context: handledByCaller() })
      .pipe(tap({ next: () => this.forget(), error: () => this.forget() }));
  }

  startTotpSetup(): Observable<TotpSetup> {
    return this.http.post<TotpSetup>('/api/auth/totp/setup', null);
  }

  confirmTotp(code: string): Observable<CurrentUser> {
    return this.http
      .post<CurrentUser>('/api/auth/totp/confirm', { code })
      .pipe(tap((user) => this.replace(user)));
  }

  replace(user: CurrentUser): void {
    this.probe = null;
    this.current.set(user);
  }

  /** The session has ended (sign-out, or a 401 from any request). */
  forget(): void {
    this.probe = null;
    this.current.set(null);
  }
}
