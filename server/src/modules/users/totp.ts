import type { EntityManager } from '@mikro-orm/postgresql';
import { Secret, TOTP } from 'otpauth';
import { User } from './user.entity';

const totpPeriodS = 30;

/** TOTP of RFC 6238: SHA-1, 6 digits, 30 s steps, one step of drift either way. */
function totp(secret: string, label: string): TOTP {
  return new TOTP({
    issuer: 'Emberline',
    label,
    algorithm: 'SHA1',
    digits: 6,
    period: totpPeriodS,
    secret: Secret.fromBase32(secret),
  });
}

export function newTotpSecret(): string {
  return new Secret({ size: 20 }).base32;
}

export function totpUri(secret: string, email: string): string {
  return totp(secret, email).toString();
}

/**
 * The time step (RFC 6238 §4.2: floor(unix seconds / 30)) whose code `code` is, within one step
 * of drift either way; null when it matches none. Callers keep the step of the last code used
 * and accept only a later one, so that a code works once (§5.2: "the verifier MUST NOT accept
 * the second attempt of the OTP after the successful validation has been issued").
 */
export function totpCodeStep(secret: string, code: string, timestamp = Date.now()): number | null {
  const delta = totp(secret, '').validate({ token: code, window: 1, timestamp });
  return delta === null ? null : Math.floor(timestamp / 1000 / totpPeriodS) + delta;
}

/**
 * Accepts `code` for the user once: true when it matches a time step later than the last one
 * used, which it then records. One conditional UPDATE, so two requests with the same code (on one
 * process or several) cannot both pass.
 */
export async function useTotpCode(
  em: EntityManager,
  userId: string,
  secret: string,
  code: string,
  timestamp = Date.now(),
): Promise<boolean> {
  const step = totpCodeStep(secret, code, timestamp);
  if (step === null) return false;
  const claimed = await em.nativeUpdate(
    User,
    { id: userId, $or: [{ totpLastStep: null }, { totpLastStep: { $lt: step } }] },
    { totpLastStep: step },
  );
  return claimed === 1;
}

/** The code an authenticator app would show now (used by tests and the demo's own checks). */
export function currentTotpCode(secret: string, timestamp = Date.now()): string {
  return totp(secret, '').generate({ timestamp });
}
