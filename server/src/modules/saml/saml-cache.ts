import { UniqueConstraintViolationException } from '@mikro-orm/core';
import type { MikroORM } from '@mikro-orm/postgresql';
import type { CacheItem, CacheProvider } from '@node-saml/passport-saml';
import { SamlRequest } from './saml-request.entity';

/**
 * node-saml's store of AuthnRequest IDs awaiting their response (InResponseTo, SAML 2.0 Core
 * §3.2.2), in PostgreSQL: the request may leave through one server process and its answer come
 * back through another, so the in-memory default would refuse good sign-ins. Each call works on
 * its own fork, outside any request's unit of work.
 */
export class PostgresSamlRequestCache implements CacheProvider {
  constructor(
    private readonly orm: MikroORM,
    private readonly expirationPeriodMs: number,
  ) {}

  private cutoff(): Date {
    return new Date(Date.now() - this.expirationPeriodMs);
  }

  /** Stores a new request ID; null when the ID is taken (node-saml's contract). */
  async saveAsync(key: string, value: string): Promise<CacheItem | null> {
    const em = this.orm.em.fork();
    // Pruned on the way in, so abandoned sign-ins do not pile up.
    await em.nativeDelete(SamlRequest, { createdAt: { $lt: this.cutoff() } });
    const createdAt = new Date();
    try {
      await em.insert(SamlRequest, { requestId: key, value, createdAt });
    } catch (error) {
      if (error instanceof UniqueConstraintViolationException) return null;
      throw error;
    }
    return { value, createdAt: createdAt.getTime() };
  }

  /** The value of a request ID still within its period, else null. */
  async getAsync(key: string): Promise<string | null> {
    const row = await this.orm.em
      .fork()
      .findOne(SamlRequest, { requestId: key, createdAt: { $gte: this.cutoff() } });
    return row?.value ?? null;
  }

  /** Forgets a request ID: an answered request is spent. */
  async removeAsync(key: string | null): Promise<string | null> {
    if (key === null) return null;
    const removed = await this.orm.em.fork().nativeDelete(SamlRequest, { requestId: key });
    return removed > 0 ? key : null;
  }
}
