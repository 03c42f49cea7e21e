import { inject } from '@angular/core';
import {
  Router,
  type CanActivateChildFn,
  type CanActivateFn,
  type CanMatchFn,
} from '@angular/router';
import type { CurrentUser, Role } from '@emberline/shared';
import { AuthSession } from './auth-session';

/** Where a signed-in user belongs first: enrolment of a required second factor, then a role. */
export function homeOf(user: CurrentUser): string {
  if (user.mustEnrolTotp) return '/account';
  if (user.roles.length === 0) return '/no-role';
  return '/cases';
}

/** The shell needs a session; without one, sign in and come back. */
export const signedInGuard: CanActivateFn = async (_route, state) => {
  const router = inject(Router);
  const user = await inject(AuthSession).load();
  if (user) return true;
  return router.createUrlTree(['/sign-in'], { queryParams: { returnUrl: state.url } });
};

/** The sign-in page is for those not signed in. */
export const signedOutGuard: CanActivateFn = async () => {
  const router = inject(Router);
  const user = await inject(AuthSession).load();
  return user ? router.parseUrl(homeOf(user)) : true;
};

/**
 * While a required second factor is missing every API answers 403, so only the account page
 * (enrolment) is open; a user without any role sees the page that says so.
 */
export const enrolmentGuard: CanActivateChildFn = (_route, state) => {
  const router = inject(Router);
  const user = inject(AuthSession).user();
  if (!user) return router.createUrlTree(['/sign-in'], { queryParams: { returnUrl: state.url } });
  const path = state.url.split(/[?#]/)[0] ?? '';
  if (user.mustEnrolTotp && path !== '/account') return router.parseUrl('/account');
  if (
    !user.mustEnrolTotp &&
    user.roles.length === 0 &&
    path !== '/account' &&
    path !== '/no-role'
  ) {
    return router.parseUrl('/no-role');
  }
  return true;
};

/**
 * A route for some roles only (the server checks again on every request). As `canMatch` it runs
 * before the shell's guards, so it asks for the session itself.
 */
export function roleGuard(...allowed: Role[]): CanMatchFn & CanActivateFn {
  return async () => {
    const session = inject(AuthSession);
    const router = inject(Router);
    const user = await session.load();
    if (user && !user.mustEnrolTotp && session.hasRole(...allowed)) return true;
    return router.parseUrl(user ? homeOf(user) : '/sign-in');
  };
}
