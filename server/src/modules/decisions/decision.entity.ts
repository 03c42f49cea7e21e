import {
  Collection,
  Entity,
  ManyToOne,
  OneToMany,
  OneToOne,
  Property,
  type Ref,
} from '@mikro-orm/core';
import type { BookingUrgency, QuorumView, Treatment } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { User } from '../users/user.entity';
import { DecisionAmendment } from './decision-amendment.entity';

/**
 * The board's signed decision on a case: never edited once signed (amendments are appended).
 * `quorum` is the quorum as it stood when it was signed.
 */
@Entity({ tableName: 'decision' })
export class Decision extends BaseEntity {
  @OneToOne(() => ClinicalCase, { ref: true, owner: true, unique: true, deleteRule: 'cascade' })
  clinicalCase: Ref<ClinicalCase>;

  @ManyToOne(() => AgendaItem, { ref: true, nullable: true, deleteRule: 'set null' })
  agendaItem: Ref<AgendaItem> | null = null;

  @Property({ type: 'string', length: 24 })
  outcome: Treatment;

  @ManyToOne(() => NeedlePlan, { ref: true, nullable: true, deleteRule: 'restrict' })
  selectedPlan: Ref<NeedlePlan> | null = null;

  @Property({ type: 'text' })
  rationale: string;

  @Property({ type: 'text', nullable: true })
  conditions: string | null = null;

  @ManyToOne(() => User, { ref: true })
  signer: Ref<User>;

  @Property({ type: 'Date', columnType: 'timestamptz' })
  signedAt: Date = new Date();

  @Property({ type: 'string', length: 8 })
  signInMethod: 'local' | 'saml';

  @Property({ type: 'json' })
  quorum: QuorumView;

  @Property({ type: 'text', nullable: true })
  quorumOverrideReason: string | null = null;

  /** How soon the board wants the procedure; the coordinator's queue sorts by it. */
  @Property({ type: 'string', length: 12, default: 'routine' })
  urgency: BookingUrgency = 'routine';

  @OneToMany(() => DecisionAmendment, (amendment) => amendment.decision, {
    orderBy: { signedAt: 'asc' },
  })
  amendments = new Collection<DecisionAmendment>(this);

  constructor(fields: {
    clinicalCase: Ref<ClinicalCase>;
    outcome: Treatment;
    rationale: string;
    signer: Ref<User>;
    signInMethod: 'local' | 'saml';
    quorum: QuorumView;
  }) {
    super();
    this.clinicalCase = fields.clinicalCase;
    this.outcome = fields.outcome;
    this.rationale = fields.rationale;
    this.signer = fields.signer;
    this.signInMethod = fields.signInMethod;
    this.quorum = fields.quorum;
  }
}
