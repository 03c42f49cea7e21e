import { HttpContext, HttpContextToken } from '@angular/common/http';

/**
 * The caller expects a 401 and handles it (a refused sign-in, the probe for a session):
 * the problem interceptor does not send the user to the sign-in page for it.
 */
export const EXPECTS_UNAUTHENTICATED = new HttpContextToken<boolean>(() => false);

/** The caller shows the error next to the form it came from: no snack bar. */
export const SHOWS_OWN_ERRORS = new HttpContextToken<boolean>(() => false);

/** Context of a request whose 401 and error message the caller deals with itself. */
export function handledByCaller(): HttpContext {
  return new HttpContext().set(EXPECTS_UNAUTHENTICATED, true).set(SHOWS_OWN_ERRORS, true);
}
