import { Entity, Index, Property } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';

export const mailDeliveryStates = ['queued', 'sent', 'failed'] as const;
export type MailDeliveryState = (typeof mailDeliveryStates)[number];

/**
 * One queued e-mail and how its delivery went. Its id is also the pg-boss job id and the
 * message's Message-ID, so a retried job finds the row it must not send twice. Holds no body:
 * the subject and addresses only, and an error code (never an error message, which may quote
 * an address or a server's words).
 */
@Entity({ tableName: 'mail_delivery' })
export class MailDelivery extends BaseEntity {
  @Property({ type: 'string', length: 200 })
  subject: string;

  @Property({ type: 'text[]' })
  recipients: string[];

  @Property({ type: 'string', length: 10 })
  state: MailDeliveryState = 'queued';

  @Property({ type: 'integer' })
  attempts = 0;

  /** e.g. `ECONNECTION` or `smtp-550`. */
  @Property({ type: 'string', length: 40, nullable: true })
  lastErrorCode: string | null = null;

  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  sentAt: Date | null = null;

  /** What the mail is about, e.g. `booking:<uuid>`, so that record can show its mails' states. */
  @Property({ type: 'string', length: 120, nullable: true })
  @Index()
  reference: string | null;

  constructor(fields: { subject: string; recipients: string[]; reference: string | null }) {
    super();
    this.subject = fields.subject;
    this.recipients = fields.recipients;
    this.reference = fields.reference;
  }
}
