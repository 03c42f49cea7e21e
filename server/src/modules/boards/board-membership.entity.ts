import { Entity, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import type { Specialty } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { User } from '../users/user.entity';
import { Board } from './board.entity';

@Entity({ tableName: 'board_membership' })
@Unique({ properties: ['board', 'user'] })
export class BoardMembership extends BaseEntity {
  @ManyToOne(() => Board, { ref: true, deleteRule: 'cascade' })
  board: Ref<Board>;

  @ManyToOne(() => User, { ref: true, deleteRule: 'cascade' })
  user: Ref<User>;

  @Property({ type: 'string', length: 40 })
  specialty: Specialty;

  constructor(board: Ref<Board>, user: Ref<User>, specialty: Specialty) {
    super();
    this.board = board;
    this.user = user;
    this.specialty = specialty;
  }
}
