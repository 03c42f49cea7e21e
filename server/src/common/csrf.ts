import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import { ForbiddenError } from './errors';

/**
 * CSRF protection by Angular's own convention: the server sets a readable `XSRF-TOKEN` cookie and
 * HttpClient echoes it in `X-XSRF-TOKEN` on every state-changing request. The token is signed and
 * bound to the session (OWASP "signed double-submit cookie"), so a cookie planted by a sibling
 * site is refused and sign-in issues a fresh one.
 */
export const csrfCookieName = 'XSRF-TOKEN';
export const csrfHeaderName = 'x-xsrf-token';
const safeMethods = new Set(['GET', 'HEAD', 'OPTIONS']);

function binding(request: Request): string {
  return request.session?.userId ? request.sessionID : '';
}

function sign(secret: string, bindingValue: string, nonce: string): string {
  return createHmac('sha256', secret).update(`${bindingValue}.${nonce}`).digest('base64url');
}

function isValid(secret: string, request: Request, token: string | undefined): boolean {
  if (!token) return false;
  const [nonce, signature] = token.split('.');
  if (!nonce || !signature) return false;
  const expected = Buffer.from(sign(secret, binding(request), nonce));
  const actual = Buffer.from(signature);
  return expected.length === actual.length && timingSafeEqual(expected, actual);
}

export function issueCsrfToken(
  secret: string,
  request: Request,
  response: Response,
  isSecure: boolean,
): void {
  const nonce = randomBytes(18).toString('base64url');
  response.cookie(csrfCookieName, `${nonce}.${sign(secret, binding(request), nonce)}`, {
    httpOnly: false,
    sameSite: 'strict',
    secure: isSecure,
    path: '/',
  });
}

export function csrfProtection(options: {
  secret: string;
  isSecure: boolean;
  /** Paths that receive cross-site POSTs by design (the SAML ACS) and prove themselves otherwise. */
  exemptPaths: string[];
}): RequestHandler {
  return (request, response, next) => {
    const cookieToken = request.cookies?.[csrfCookieName] as string | undefined;
    if (safeMethods.has(request.method)) {
      if (!isValid(options.secret, request, cookieToken)) {
        issueCsrfToken(options.secret, request, response, options.isSecure);
      }
      next();
      return;
    }
    if (options.exemptPaths.includes(request.path)) {
      next();
      return;
    }
    const headerToken = request.get(csrfHeaderName);
    if (
      !headerToken ||
      headerToken !== cookieToken ||
      !isValid(options.secret, request, headerToken)
    ) {
      issueCsrfToken(options.secret, request, response, options.isSecure);
      throw new ForbiddenError(
        'The request lacks a valid CSRF token; reload the page and try again.',
        'urn:emberline:problem:csrf',
      );
    }
    next();
  };
}
