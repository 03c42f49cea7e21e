import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import {
  Router,
  UrlTree,
  provideRouter,
  type ActivatedRouteSnapshot,
  type RouterStateSnapshot,
} from '@angular/router';
import type { CurrentUser } from '@emberline/shared';
import { enrolmentGuard, roleGuard, signedInGuard } from './access-guards';
import { AuthSession } from './auth-session';

const base: CurrentUser = {
  id: '2d7b4a1f-3c8e-4f9a-8b0c-1d2e3f4a5b6c',
  email: 'someone@emberline.test',
  displayName: 'Someone',
  roles: ['board-member'],
  boards: [],
  signInMethod: 'local',
  hasTotp: false,
  mustEnrolTotp: false,
};

function state(url: string): RouterStateSnapshot {
  return { url } as RouterStateSnapshot;
}

const route = {} as ActivatedRouteSnapshot;

describe('access guards', () => {
  let router: Router;

  function run<T>(guard: () => T): T {
    return TestBed.runInInjectionContext(guard);
  }

  function path(result: unknown): string {
    return result instanceof UrlTree ? router.serializeUrl(result) : String(result);
  }

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideZonelessChangeDetection(),
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    });
    router = TestBed.inject(Router);
  });

  it('sends a visitor without a session to sign in, remembering the address', async () => {
    const result = run(() => signedInGuard(route, state('/cases/abc')));
    TestBed.inject(HttpTestingController)
      .expectOne('/api/auth/me')
      .flush(
        { type: 'about:blank', title: 'Not signed in', status: 401 },
        { status: 401, statusText: 'Unauthorized' },
      );

    expect(path(await result)).toBe('/sign-in?returnUrl=%2Fcases%2Fabc');
  });

  it('keeps a user whose role needs a second factor on the account page until it is set up', () => {
    TestBed.inject(AuthSession).replace({ ...base, mustEnrolTotp: true });

    expect(path(run(() => enrolmentGuard(route, state('/cases'))))).toBe('/account');
    expect(run(() => enrolmentGuard(route, state('/account')))).toBe(true);
  });

  it('shows a user without any role the page that says an administrator must grant one', () => {
    TestBed.inject(AuthSession).replace({ ...base, roles: [] });

    expect(path(run(() => enrolmentGuard(route, state('/boards'))))).toBe('/no-role');
    expect(run(() => enrolmentGuard(route, state('/no-role')))).toBe(true);
    expect(run(() => enrolmentGuard(route, state('/account')))).toBe(true);
  });

  it('opens administration to administrators only', async () => {
    const adminOnly = roleGuard('administrator');
    TestBed.inject(AuthSession).replace(base);
    expect(path(await run(() => adminOnly(route, state('/admin'))))).toBe('/cases');

    TestBed.inject(AuthSession).replace({ ...base, roles: ['administrator'] });
    expect(await run(() => adminOnly(route, state('/admin')))).toBe(true);
  });
});
