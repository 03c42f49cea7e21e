import { Entity, Index, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import type {
  AnaesthesiaKind,
  BookingKind,
  BookingState,
  ChecklistItemKey,
  FollowUpModality,
} from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { User } from '../users/user.entity';

/** A manual item's tick, or an override of a failed item, as stored on the booking. */
export interface StoredChecklistMark {
  /** Manual items: ticked (true) or unticked (false). */
  isMet?: boolean;
  checkedById?: string;
  checkedAt?: string;
  override?: { reason: string; byId: string; at: string };
}

/** The selected plan's applicator profiles when the procedure was booked. */
export interface BookedApplicator {
  profileId: string;
  name: string;
  version: number;
}

/**
 * One appointment of a case: the procedure (`procedure`) or its follow-up imaging
 * (`follow-up-imaging`). Never deleted: a cancellation keeps the row (state `cancelled`) and its
 * history. At most one live (booked or confirmed) booking of each kind per case, by a partial
 * unique index; clashes of room and operator are checked under an advisory lock (README).
 */
@Entity({ tableName: 'procedure_booking' })
@Unique({
  name: 'procedure_booking_one_live',
  expression:
    'create unique index "procedure_booking_one_live" on "procedure_booking" ("clinical_case_id", "kind") ' +
    "where \"state\" in ('booked', 'confirmed')",
})
export class ProcedureBooking extends BaseEntity {
  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  @Index()
  clinicalCase: Ref<ClinicalCase>;

  @Property({ type: 'string', length: 20 })
  kind: BookingKind;

  @Property({ type: 'string', length: 12 })
  state: BookingState = 'booked';

  @Property({ type: 'Date', columnType: 'timestamptz' })
  @Index()
  startsAt: Date;

  @Property({ type: 'integer' })
  durationMin: number;

  /** As entered; clashes compare `roomKey` (trimmed, spaces collapsed, lower case). */
  @Property({ type: 'string', length: 80 })
  room: string;

  @Property({ type: 'string', length: 80 })
  roomKey: string;

  @ManyToOne(() => User, { ref: true, nullable: true })
  operator: Ref<User> | null = null;

  @Property({ type: 'string', length: 12, nullable: true })
  anaesthesia: AnaesthesiaKind | null = null;

  @Property({ type: 'string', length: 8, nullable: true })
  modality: FollowUpModality | null = null;

  @Property({ type: 'json' })
  applicators: BookedApplicator[] = [];

  @Property({ type: 'text', nullable: true })
  notes: string | null = null;

  /** The invitation's SEQUENCE (RFC 5545 §3.8.7.4): raised with every change. */
  @Property({ type: 'integer' })
  sequence = 0;

  @ManyToOne(() => User, { ref: true })
  bookedBy: Ref<User>;

  @Property({ type: 'json' })
  checklist: Partial<Record<ChecklistItemKey, StoredChecklistMark>> = {};

  constructor(fields: {
    clinicalCase: Ref<ClinicalCase>;
    kind: BookingKind;
    startsAt: Date;
    durationMin: number;
    room: string;
    bookedBy: Ref<User>;
  }) {
    super();
    this.clinicalCase = fields.clinicalCase;
    this.kind = fields.kind;
    this.startsAt = fields.startsAt;
    this.durationMin = fields.durationMin;
    this.room = fields.room;
    this.roomKey = roomKeyOf(fields.room);
    this.bookedBy = fields.bookedBy;
  }

  get endsAt(): Date {
    return new Date(this.startsAt.getTime() + this.durationMin * 60_000);
  }
}

/** "Suite  2 " and "suite 2" are one room. */
export function roomKeyOf(room: string): string {
  return room.trim().replace(/\s+/g, ' ').toLowerCase();
}
