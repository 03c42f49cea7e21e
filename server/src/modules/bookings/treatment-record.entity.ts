import { Entity, ManyToOne, OneToOne, Property, type Ref } from '@mikro-orm/core';
import type { ComplicationGrade } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { User } from '../users/user.entity';
import { ProcedureBooking } from './booking.entity';

/** The procedure as its operator recorded it; one per case, never edited. */
@Entity({ tableName: 'treatment_record' })
export class TreatmentRecord extends BaseEntity {
  @OneToOne(() => ClinicalCase, { ref: true, owner: true, unique: true, deleteRule: 'cascade' })
  clinicalCase: Ref<ClinicalCase>;

  @ManyToOne(() => ProcedureBooking, { ref: true })
  booking: Ref<ProcedureBooking>;

  @ManyToOne(() => User, { ref: true })
  operator: Ref<User>;

  @Property({ type: 'Date', columnType: 'timestamptz' })
  performedAt: Date;

  @Property({ type: 'text' })
  applicatorsUsed: string;

  @Property({ type: 'text', nullable: true })
  deviation: string | null = null;

  @Property({ type: 'string', length: 8 })
  complicationGrade: ComplicationGrade;

  @Property({ type: 'text', nullable: true })
  complicationNote: string | null = null;

  /** The first follow-up imaging at the usual interval after `performedAt` (README). */
  @Property({ type: 'Date', columnType: 'timestamptz' })
  followUpProposedAt: Date;

  /** When the due check turned the case `follow-up-due` and told the coordinators (once). */
  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  followUpDueNotifiedAt: Date | null = null;

  constructor(fields: {
    clinicalCase: Ref<ClinicalCase>;
    booking: Ref<ProcedureBooking>;
    operator: Ref<User>;
    performedAt: Date;
    applicatorsUsed: string;
    complicationGrade: ComplicationGrade;
    followUpProposedAt: Date;
  }) {
    super();
    this.clinicalCase = fields.clinicalCase;
    this.booking = fields.booking;
    this.operator = fields.operator;
    this.performedAt = fields.performedAt;
    this.applicatorsUsed = fields.applicatorsUsed;
    this.complicationGrade = fields.complicationGrade;
    this.followUpProposedAt = fields.followUpProposedAt;
  }
}
