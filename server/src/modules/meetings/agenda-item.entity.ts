import { Entity, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { User } from '../users/user.entity';
import { Meeting } from './meeting.entity';

/**
 * One case on a meeting's agenda, at a position (1, 2, …). A case is on one meeting's agenda at
 * a time (the unique index on the case), so "its next meeting" is never ambiguous.
 */
@Entity({ tableName: 'agenda_item' })
@Unique({ properties: ['clinicalCase'] })
export class AgendaItem extends BaseEntity {
  @ManyToOne(() => Meeting, { ref: true, deleteRule: 'cascade' })
  meeting: Ref<Meeting>;

  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  clinicalCase: Ref<ClinicalCase>;

  @Property({ type: 'smallint' })
  position: number;

  @ManyToOne(() => User, { ref: true })
  addedBy: Ref<User>;

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
