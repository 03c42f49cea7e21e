import type { Response } from 'express';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { ProblemDetails } from '@emberline/shared';
import { ipKeyGenerator } from 'express-rate-limit';
import { SignInFailure } from './sign-in-failure.entity';

/** How many failures a window allows, counted three ways. */
export interface SignInLimitSettings {
  windowMs: number;
  /** Failures for one account from one address: someone mistyping, or guessing one account. */
  limit: number;
  /** Failures for one account from every address: a distributed guess at one account. */
  accountLimit: number;
  /** Failures from one address over every account: one password tried across many accounts. */
  addressLimit: number;
}

export interface SignInAttempt {
  /** `request.ip`; IPv6 addresses count by their /56 network, as express-rate-limit does. */
  address: string;
  /** The e-mail tried, or `saml`. */
  account: string;
}

export class SignInLimited extends Error {
  constructor(readonly retryAfterS: number) {
    super('Too many failed sign-in attempts');
  }

  problem(): ProblemDetails {
    return {
      type: 'urn:emberline:problem:rate-limited',
      title: 'Too many attempts',
      status: 429,
      detail: `Too many failed sign-in attempts. Try again in ${Math.ceil(this.retryAfterS / 60)} minute(s).`,
    };
  }
}

/**
 * Sign-in limits kept in PostgreSQL, so that every process behind a proxy counts the same
 * attempts. Only failures count: a clinician who signs in twenty times a shift in several tabs
 * is never held back, and a success does not reset anyone's count either (a guesser who also
 * knows one password cannot use it to clear the others).
 */
export class SignInLimits {
  constructor(private readonly settings: SignInLimitSettings) {}

  /** Throws SignInLimited when any of the three counts is at its limit. */
  async check(em: EntityManager, attempt: SignInAttempt): Promise<void> {
    const { address, account } = normalise(attempt);
    const since = new Date(Date.now() - this.settings.windowMs);
    const [row] = await em
      .getConnection()
      .execute<{ pair: string; account: string; address: string; oldest: Date | null }[]>(
        `select count(*) filter (where address = ? and account = ?) as pair,
              count(*) filter (where account = ?) as account,
              count(*) filter (where address = ?) as address,
              min(created_at) as oldest
         from sign_in_failure
        where created_at > ? and (address = ? or account = ?)`,
        [address, account, account, address, since, address, account],
      );
    const isLimited =
      Number(row.pair) >= this.settings.limit ||
      Number(row.account) >= this.settings.accountLimit ||
      Number(row.address) >= this.settings.addressLimit;
    if (!isLimited) return;
    const oldest = row.oldest ? new Date(row.oldest).getTime() : Date.now();
    const retryAfterMs = Math.max(1000, oldest + this.settings.windowMs - Date.now());
    throw new SignInLimited(Math.ceil(retryAfterMs / 1000));
  }

  /** Counts one failure (and forgets failures older than two windows). */
  async fail(em: EntityManager, attempt: SignInAttempt): Promise<void> {
    const { address, account } = normalise(attempt);
    const fork = em.fork();
    fork.persist(new SignInFailure(address, account));
    await fork.flush();
    await fork.nativeDelete(SignInFailure, {
      createdAt: { $lt: new Date(Date.now() - 2 * this.settings.windowMs) },
    });
  }
}

function normalise(attempt: SignInAttempt): SignInAttempt {
  return {
    address: ipKeyGenerator(attempt.address || 'unknown').slice(0, 64),
    account: attempt.account.trim().toLowerCase().slice(0, 320),
  };
}

/**
 * Runs `check` and answers 429 (RFC 6585) with Retry-After (RFC 9110 §10.2.3) when the attempt is
 * over a limit; true when it answered.
 */
export async function sendLimited(
  response: Response,
  check: () => Promise<void>,
): Promise<boolean> {
  try {
    await check();
    return false;
  } catch (error) {
    if (!(error instanceof SignInLimited)) throw error;
    response
      .status(429)
      .set('Retry-After', String(error.retryAfterS))
      .type('application/problem+json')
      .json(error.problem());
    return true;
  }
}
