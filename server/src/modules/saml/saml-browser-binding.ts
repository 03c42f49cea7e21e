import { createHmac, timingSafeEqual } from 'node:crypto';
import { inflateRawSync } from 'node:zlib';
import type { Request, Response } from 'express';

/**
 * Binds each AuthnRequest to the browser that started it. Without it, anyone could start a
 * sign-in in their own browser, take the IdP's signed answer and make a victim's browser post it
 * to our Assertion Consumer Service, signing the victim into the attacker's account (login CSRF;
 * SAML 2.0 Profiles §4.1.4.5 leaves this to the service provider; OWASP SAML Security Cheat
 * Sheet, "Validate the InResponseTo against the user's session"). The ACS takes cross-site
 * posts, so it cannot use the CSRF token: instead the browser keeps the request IDs it started in
 * a cookie signed with the session secret, and a response whose InResponseTo is not among them is
 * refused.
 */
export const samlRequestCookieName = 'em_saml_requests';

/** Sign-ins one browser may have under way at once (several tabs); older ones drop out. */
const maxPendingPerBrowser = 4;

function mac(secret: string, requestId: string): string {
  return createHmac('sha256', secret).update(`saml-request:${requestId}`).digest('base64url');
}

/** The AuthnRequest ID inside an HTTP-Redirect URL (SAML 2.0 Bindings §3.4.4: DEFLATE, base64). */
export function authnRequestIdOf(redirectUrl: string): string {
  const encoded = new URL(redirectUrl).searchParams.get('SAMLRequest');
  if (!encoded) throw new Error('the redirect carries no SAMLRequest');
  const xml = inflateRawSync(Buffer.from(encoded, 'base64')).toString('utf8');
  const id = /<(?:\w+:)?AuthnRequest\b[^>]*\sID="([^"]+)"/.exec(xml)?.[1];
  if (!id) throw new Error('the AuthnRequest has no ID');
  return id;
}

/** The request IDs this browser's cookie vouches for (entries with a wrong MAC are dropped). */
function pendingIds(request: Request, secret: string): string[] {
  const raw = (request.cookies as Record<string, unknown> | undefined)?.[samlRequestCookieName];
  if (typeof raw !== 'string') return [];
  return raw
    .split('|')
    .map((entry) => entry.split('~'))
    .filter((parts): parts is [string, string] => parts.length === 2)
    .filter(([id, tag]) => {
      const expected = Buffer.from(mac(secret, id));
      const given = Buffer.from(tag);
      return expected.length === given.length && timingSafeEqual(expected, given);
    })
    .map(([id]) => id);
}

/**
 * Adds `requestId` to the browser's cookie. SameSite=None behind HTTPS, since the IdP's page
 * posts cross-site (a Lax cookie would not come along); Lax on plain http, where browsers refuse
 * None without Secure (there the demo's IdP is on the same host, a same-site post).
 */
export function bindToBrowser(
  request: Request,
  response: Response,
  options: { secret: string; isSecure: boolean; maxAgeMs: number; requestId: string },
): void {
  const ids = [...pendingIds(request, options.secret), options.requestId].slice(
    -maxPendingPerBrowser,
  );
  response.cookie(
    samlRequestCookieName,
    ids.map((id) => `${id}~${mac(options.secret, id)}`).join('|'),
    {
      httpOnly: true,
      secure: options.isSecure,
      sameSite: options.isSecure ? 'none' : 'lax',
      path: '/api/auth/saml',
      maxAge: options.maxAgeMs,
    },
  );
}

/** Whether this browser started the request `inResponseTo` answers. */
export function isBoundToBrowser(request: Request, secret: string, inResponseTo: string): boolean {
  return pendingIds(request, secret).includes(inResponseTo);
}

/** Forgets an answered request in the browser's cookie. */
export function releaseFromBrowser(
  request: Request,
  response: Response,
  options: { secret: string; isSecure: boolean; requestId: string },
): void {
  const rest = pendingIds(request, options.secret).filter((id) => id !== options.requestId);
  const cookie = {
    httpOnly: true,
    secure: options.isSecure,
    sameSite: options.isSecure ? ('none' as const) : ('lax' as const),
    path: '/api/auth/saml',
  };
  if (rest.length === 0) response.clearCookie(samlRequestCookieName, cookie);
  else
    response.cookie(
      samlRequestCookieName,
      rest.map((id) => `${id}~${mac(options.secret, id)}`).join('|'),
      cookie,
    );
}
