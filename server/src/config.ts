import type { SignInLimitSettings } from './modules/auth/sign-in-limits';
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname } from 'node:path';
import { fileURLToPath } from 'node:url';

export interface SamlSettings {
  /** The identity provider's SSO endpoint (HTTP-Redirect binding). */
  entryPoint: string;
  /** The IdP's entity ID; responses from any other issuer are refused. */
  idpIssuer: string;
  /** PEM certificate(s) the IdP signs with. */
  idpCert: string | string[];
  /** Our entity ID, also the audience the assertions must name. */
  spEntityId: string;
  /** Assertion Consumer Service URL (HTTP-POST binding). */
  callbackUrl: string;
  acceptedClockSkewMs: number;
  maxAssertionAgeMs: number;
  requestIdExpirationPeriodMs: number;
}

export interface AppConfig {
  /** Where the browser reaches the app, e.g. http://127.0.0.1:4300. */
  publicUrl: string;
  sessionSecret: string;
  /** A session ends after this long without a request… */
  sessionIdleTimeoutMs: number;
  /** …and in any case this long after sign-in. */
  sessionAbsoluteLifetimeMs: number;
  /** Set the Secure flag on cookies (true behind HTTPS). */
  isCookieSecure: boolean;
  /** Failed sign-ins allowed per window: see modules/auth/sign-in-limits.ts. */
  loginRateLimit: SignInLimitSettings;
  trustProxy: boolean | number;
  saml: SamlSettings | null;
  /** Folder of the built Angular app to serve, or null for API only. */
  clientDist: string | null;
  /**
   * The IANA time zone the hospital's times are written in (booking mails, clash messages);
   * `HOSPITAL_TIME_ZONE`, UTC when unset. Stored times are UTC instants whatever it says.
   */
  hospitalTimeZone?: string;
}

const secretFile = fileURLToPath(new URL('../../.data/session-secret', import.meta.url));

/** A secret kept across restarts in .data/ (git-ignored); several processes need SESSION_SECRET. */
function sessionSecret(): string {
  if (process.env.SESSION_SECRET) return process.env.SESSION_SECRET;
  if (!existsSync(secretFile)) {
    mkdirSync(dirname(secretFile), { recursive: true });
    writeFileSync(secretFile, randomBytes(32).toString('base64url'), { mode: 0o600 });
  }
  return readFileSync(secretFile, 'utf8').trim();
}

const minutes = 60_000;

export function configFromEnvironment(env = process.env): AppConfig {
  const port = Number(env.PORT ?? 4300);
  const publicUrl = env.PUBLIC_URL ?? `http://127.0.0.1:${port}`;
  return {
    publicUrl,
    sessionSecret: sessionSecret(),
    sessionIdleTimeoutMs: Number(env.SESSION_IDLE_MINUTES ?? 30) * minutes,
    sessionAbsoluteLifetimeMs: Number(env.SESSION_ABSOLUTE_HOURS ?? 12) * 60 * minutes,
    isCookieSecure: publicUrl.startsWith('https://'),
    loginRateLimit: {
      windowMs: 15 * minutes,
      limit: Number(env.LOGIN_RATE_LIMIT ?? 10),
      accountLimit: Number(env.LOGIN_ACCOUNT_RATE_LIMIT ?? 30),
      addressLimit: Number(env.LOGIN_ADDRESS_RATE_LIMIT ?? 100),
    },
    trustProxy: env.TRUST_PROXY ? Number(env.TRUST_PROXY) : false,
    saml: null,
    clientDist: null,
    hospitalTimeZone: hospitalTimeZone(env.HOSPITAL_TIME_ZONE),
  };
}

/** The zone as given, checked against the runtime's IANA data; a wrong name stops the start. */
function hospitalTimeZone(value: string | undefined): string {
  const zone = value?.trim() || 'UTC';
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: zone });
  } catch {
    throw new Error(`HOSPITAL_TIME_ZONE: "${zone}" is not an IANA time zone (e.g. Europe/Oslo)`);
  }
  return zone;
}
