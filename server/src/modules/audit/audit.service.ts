import type { EntityManager } from '@mikro-orm/postgresql';
import type { FilterQuery } from '@mikro-orm/core';
import type { AuditAction, AuditEventView, Page } from '@emberline/shared';
import type { Actor } from '../../common/request-context';
import { AuditEvent } from './audit-event.entity';

export interface AuditEntry {
  action: AuditAction;
  entityType?: string;
  entityId?: string;
  outcome?: 'success' | 'refused';
  /** Record ids, reasons and field names only: never a patient-identifying value. */
  detail?: Record<string, unknown>;
}

/** Queues an audit event in the unit of work, so it lands with the change it describes. */
export function recordAudit(em: EntityManager, actor: Actor, entry: AuditEntry): AuditEvent {
  const event = new AuditEvent({
    actorId: actor.id,
    actorEmail: actor.email,
    ip: actor.ip,
    ...entry,
  });
  em.persist(event);
  return event;
}

/** Writes an audit event on its own (reads, refusals: nothing else to flush with). */
export async function writeAudit(
  em: EntityManager,
  actor: Actor,
  entry: AuditEntry,
): Promise<void> {
  const fork = em.fork();
  recordAudit(fork, actor, entry);
  await fork.flush();
}

export async function listAuditEvents(
  em: EntityManager,
  query: {
    page: number;
    size: number;
    action?: AuditAction;
    actor?: string;
    entityId?: string;
    from?: string;
    to?: string;
  },
): Promise<Page<AuditEventView>> {
  const where: FilterQuery<AuditEvent> = {};
  if (query.action) where.action = query.action;
  if (query.actor) where.actorEmail = { $ilike: `%${escapeLike(query.actor)}%` };
  if (query.entityId) where.entityId = query.entityId;
  if (query.from || query.to) {
    where.at = {
      ...(query.from ? { $gte: new Date(query.from) } : {}),
      ...(query.to ? { $lte: new Date(query.to) } : {}),
    };
  }
  const [events, total] = await em.findAndCount(AuditEvent, where, {
    orderBy: { at: 'desc', id: 'desc' },
    limit: query.size,
    offset: query.page * query.size,
  });
  return {
    items: events.map((event) => ({
      id: event.id,
      at: event.at.toISOString(),
      actorId: event.actorId,
      actorEmail: event.actorEmail,
      action: event.action,
      entityType: event.entityType,
      entityId: event.entityId,
      ip: event.ip,
      outcome: event.outcome,
      detail: event.detail,
    })),
    total,
    page: query.page,
    size: query.size,
  };
}

export function escapeLike(value: string): string {
  return value.replace(/[\\%_]/g, (character) => `\\${character}`);
}
