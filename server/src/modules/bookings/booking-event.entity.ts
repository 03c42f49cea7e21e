import { Entity, Index, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { BookingHistoryEntry } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { User } from '../users/user.entity';
import { ProcedureBooking } from './booking.entity';

/** One step of a booking's history, appended and never changed. */
@Entity({ tableName: 'booking_event' })
export class BookingEvent extends BaseEntity {
  @ManyToOne(() => ProcedureBooking, { ref: true, deleteRule: 'cascade' })
  @Index()
  booking: Ref<ProcedureBooking>;

  @Property({ type: 'string', length: 16 })
  action: BookingHistoryEntry['action'];

  @Property({ type: 'Date', columnType: 'timestamptz' })
  at: Date = new Date();

  @ManyToOne(() => User, { ref: true })
  by: Ref<User>;

  @Property({ type: 'text', nullable: true })
  reason: string | null = null;

  /** A rebooking's fields before and after; an override names its item as `field`. */
  @Property({ type: 'json' })
  changes: BookingHistoryEntry['changes'] = [];

  constructor(fields: {
    booking: Ref<ProcedureBooking>;
    action: BookingHistoryEntry['action'];
    by: Ref<User>;
    reason?: string | null;
    changes?: BookingHistoryEntry['changes'];
    at?: Date;
  }) {
    super();
    this.booking = fields.booking;
    this.action = fields.action;
    this.by = fields.by;
    this.reason = fields.reason ?? null;
    this.changes = fields.changes ?? [];
    if (fields.at) this.at = fields.at;
  }
}

/** Appends one step to a booking's history, in the caller's unit of work. */
export function appendBookingEvent(
  em: EntityManager,
  bookingId: string,
  userId: string,
  action: BookingHistoryEntry['action'],
  reason: string | null = null,
  changes: BookingHistoryEntry['changes'] = [],
): void {
  em.persist(
    new BookingEvent({
      booking: em.getReference(ProcedureBooking, bookingId, { wrapped: true }),
      action,
      by: em.getReference(User, userId, { wrapped: true }),
      reason,
      changes,
    }),
  );
}
