import { randomUUID } from 'node:crypto';
import { Entity, Index, PrimaryKey, Property } from '@mikro-orm/core';
import type { AuditAction } from '@emberline/shared';

/**
 * Who did what to which record, when and from where. Written once, never updated; actor kept
 * as plain columns so the trail survives the account. Never holds a patient-identifying value.
 */
@Entity({ tableName: 'audit_event' })
@Index({ properties: ['at'] })
export class AuditEvent {
  @PrimaryKey({ type: 'uuid' })
  id: string = randomUUID();

  @Property({ type: 'Date', columnType: 'timestamptz' })
  at: Date = new Date();

  @Property({ type: 'uuid', nullable: true })
  @Index()
  actorId: string | null;

  @Property({ type: 'string', length: 254, nullable: true })
  actorEmail: string | null;

  @Property({ type: 'string', length: 40 })
  @Index()
  action: AuditAction;

  @Property({ type: 'string', length: 40, nullable: true })
  entityType: string | null;

  @Property({ type: 'string', length: 64, nullable: true })
  @Index()
  entityId: string | null;

  @Property({ type: 'string', length: 64, nullable: true })
  ip: string | null;

  @Property({ type: 'string', length: 10 })
  outcome: 'success' | 'refused';

  @Property({ type: 'json' })
  detail: Record<string, unknown>;

  constructor(fields: {
    actorId: string | null;
    actorEmail: string | null;
    action: AuditAction;
    entityType?: string | null;
    entityId?: string | null;
    ip: string | null;
    outcome?: 'success' | 'refused';
    detail?: Record<string, unknown>;
  }) {
    this.actorId = fields.actorId;
    this.actorEmail = fields.actorEmail;
    this.action = fields.action;
    this.entityType = fields.entityType ?? null;
    this.entityId = fields.entityId ?? null;
    this.ip = fields.ip;
    this.outcome = fields.outcome ?? 'success';
    this.detail = fields.detail ?? {};
  }
}
