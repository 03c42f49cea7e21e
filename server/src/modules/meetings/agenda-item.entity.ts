import { Entity, Index, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { User } from '../users/user.entity';
import { Meeting } from './meeting.entity';

/**
 * One case on a meeting's agenda, at a position (1, 2, …). A case is on one open agenda item at
 * a time (the partial unique index on the case), so "its next meeting" is never ambiguous; an
 * item closes when its decision is signed or its meeting closes, and stays for the record.
 */
@Entity({ tableName: 'agenda_item' })
@Unique({
  name: 'agenda_item_one_open_per_case',
  expression:
    'create unique index "agenda_item_one_open_per_case" on "agenda_item" ("clinical_case_id") ' +
    'where "closed_at" is null',
})
export class AgendaItem extends BaseEntity {
  @ManyToOne(() => Meeting, { ref: true, deleteRule: 'cascade' })
  meeting: Ref<Meeting>;

  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  @Index()
  clinicalCase: Ref<ClinicalCase>;

  @Property({ type: 'smallint' })
  position: number;

  @ManyToOne(() => User, { ref: true })
  addedBy: Ref<User>;

  /** Set when the item's decision is signed or its meeting closes: voting ends. */
  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  closedAt: Date | null = null;

  constructor(fields: {
    meeting: Ref<Meeting>;
    clinicalCase: Ref<ClinicalCase>;
    position: number;
    addedBy: Ref<User>;
  }) {
    super();
    this.meeting = fields.meeting;
    this.clinicalCase = fields.clinicalCase;
    this.position = fields.position;
    this.addedBy = fields.addedBy;
  }
}
