import { Secret, TOTP } from 'otpauth';

/** TOTP of RFC 6238: SHA-1, 6 digits, 30 s steps, one step of drift either way. */
function totp(secret: string, label: string): TOTP {
  return new TOTP({
    issuer: 'Emberline',
    label,
    algorithm: 'SHA1',
    digits: 6,
    period: 30,
    secret: Secret.fromBase32(secret),
  });
}

export function newTotpSecret(): string {
  return new Secret({ size: 20 }).base32;
}

export function totpUri(secret: string, email: string): string {
  return totp(secret, email).toString();
}

export function isTotpCodeValid(secret: string, code: string, timestamp = Date.now()): boolean {
  return totp(secret, '').validate({ token: code, window: 1, timestamp }) !== null;
}

/** The code an authenticator app would show now (used by tests and the demo's own checks). */
export function currentTotpCode(secret: string, timestamp = Date.now()): string {
  return totp(secret, '').generate({ timestamp });
}
