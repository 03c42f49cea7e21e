import { Collection, Entity, OneToMany, Property, Unique } from '@mikro-orm/core';
import type { Specialty } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { BoardMembership } from './board-membership.entity';

@Entity({ tableName: 'board' })
export class Board extends BaseEntity {
  @Property({ type: 'string', length: 80 })
  @Unique()
  name: string;

  @Property({ type: 'text' })
  description = '';

  /** The specialties that must be present for the board's quorum (administrators edit them). */
  @Property({ type: 'json', default: '[]' })
  requiredSpecialties: Specialty[] = [];

  @OneToMany(() => BoardMembership, (membership) => membership.board)
  memberships = new Collection<BoardMembership>(this);

  constructor(name: string, description = '') {
    super();
    this.name = name;
    this.description = description;
  }
}
