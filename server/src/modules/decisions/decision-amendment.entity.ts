import { Entity, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';
import { User } from '../users/user.entity';
import { Decision } from './decision.entity';

/** An amendment appended to a signed decision, itself signed; never edited. */
@Entity({ tableName: 'decision_amendment' })
export class DecisionAmendment extends BaseEntity {
  @ManyToOne(() => Decision, { ref: true, deleteRule: 'cascade' })
  decision: Ref<Decision>;

  @Property({ type: 'text' })
  reason: string;

  @Property({ type: 'text' })
  text: string;

  @ManyToOne(() => User, { ref: true })
  signer: Ref<User>;

  @Property({ type: 'Date', columnType: 'timestamptz' })
  signedAt: Date = new Date();

  constructor(fields: {
    decision: Ref<Decision>;
    reason: string;
    text: string;
    signer: Ref<User>;
  }) {
    super();
    this.decision = fields.decision;
    this.reason = fields.reason;
    this.text = fields.text;
    this.signer = fields.signer;
  }
}
