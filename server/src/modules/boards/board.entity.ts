import { Collection, Entity, OneToMany, Property, Unique } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';
import { BoardMembership } from './board-membership.entity';

@Entity({ tableName: 'board' })
export class Board extends BaseEntity {
  @Property({ type: 'string', length: 80 })
  @Unique()
  name: string;

  @Property({ type: 'text' })
  description = '';

  @OneToMany(() => BoardMembership, (membership) => membership.board)
  memberships = new Collection<BoardMembership>(this);

  constructor(name: string, description = '') {
    super();
    this.name = name;
    this.description = description;
  }
}
