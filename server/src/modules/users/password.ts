import { hash, verify, type Options } from '@node-rs/argon2';

/**
 * argon2id with OWASP's second recommended setting (19 MiB, t = 2, p = 1). `Algorithm` is an
 * ambient const enum that isolated modules cannot read: 2 is its Argon2id member.
 */
const options: Options = { algorithm: 2, memoryCost: 19_456, timeCost: 2, parallelism: 1 };

export function hashPassword(password: string): Promise<string> {
  return hash(password, options);
}

export async function verifyPassword(
  passwordHash: string | null,
  password: string,
): Promise<boolean> {
  if (!passwordHash) {
    // Spend the same time as a real check so unknown accounts are not told apart by timing.
    await hash(password, options);
    return false;
  }
  try {
    return await verify(passwordHash, password);
  } catch {
    return false;
  }
}
