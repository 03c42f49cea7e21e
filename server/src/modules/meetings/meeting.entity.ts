import {
  Collection,
  Entity,
  Index,
  ManyToOne,
  OneToMany,
  Property,
  type Ref,
} from '@mikro-orm/core';
import type { MeetingState } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { Board } from '../boards/board.entity';
import { User } from '../users/user.entity';
import { AgendaItem } from './agenda-item.entity';

/** A meeting of a board: when, how long, who chairs, where; `scheduled` → `in-session` → `closed`. */
@Entity({ tableName: 'meeting' })
export class Meeting extends BaseEntity {
  @ManyToOne(() => Board, { ref: true })
  @Index()
  board: Ref<Board>;

  @Property({ type: 'Date', columnType: 'timestamptz' })
  @Index()
  startsAt: Date;

  @Property({ type: 'smallint' })
  durationMin: number;

  @ManyToOne(() => User, { ref: true })
  chair: Ref<User>;

  /** A room, or a video link. */
  @Property({ type: 'string', length: 300, nullable: true })
  place: string | null = null;

  @Property({ type: 'string', length: 16 })
  state: MeetingState = 'scheduled';

  @ManyToOne(() => User, { ref: true })
  scheduledBy: Ref<User>;

  @OneToMany(() => AgendaItem, (item) => item.meeting, { orderBy: { position: 'asc' } })
  agenda = new Collection<AgendaItem>(this);

  constructor(fields: {
    board: Ref<Board>;
    startsAt: Date;
    durationMin: number;
    chair: Ref<User>;
    scheduledBy: Ref<User>;
  }) {
    super();
    this.board = fields.board;
    this.startsAt = fields.startsAt;
    this.durationMin = fields.durationMin;
    this.chair = fields.chair;
    this.scheduledBy = fields.scheduledBy;
  }
}
