import { Entity, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import type { VotePosition } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { User } from '../users/user.entity';

/**
 * A member's position on one option (a plan id or a treatment) of an agenda item. One row per
 * (item, voter, option): casting again changes it, withdrawing deletes it, so a retried event
 * or request counts once.
 */
@Entity({ tableName: 'vote' })
@Unique({ properties: ['agendaItem', 'voter', 'option'] })
export class Vote extends BaseEntity {
  @ManyToOne(() => AgendaItem, { ref: true, deleteRule: 'cascade' })
  agendaItem: Ref<AgendaItem>;

  @ManyToOne(() => User, { ref: true })
  voter: Ref<User>;

  /** A plan id or a treatment (`ablation-mw`, `tace`, …). */
  @Property({ type: 'string', length: 40 })
  option: string;

  @Property({ type: 'string', length: 8 })
  position: VotePosition;

  @Property({ type: 'text', nullable: true })
  comment: string | null = null;

  constructor(fields: {
    agendaItem: Ref<AgendaItem>;
    voter: Ref<User>;
    option: string;
    position: VotePosition;
  }) {
    super();
    this.agendaItem = fields.agendaItem;
    this.voter = fields.voter;
    this.option = fields.option;
    this.position = fields.position;
  }
}
