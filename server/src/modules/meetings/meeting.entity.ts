import {
  Collection,
  Entity,
  Index,
  ManyToOne,
  OneToMany,
  Property,
  type Ref,
} from '@mikro-orm/core';
import type { MeetingState, ViewState } from '@emberline/shared';
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

  /** Who leads the shared view; the presenter of the first item when the session opens. */
  @ManyToOne(() => User, { ref: true, nullable: true })
  lead: Ref<User> | null = null;

  /** The lead's latest view (ViewState), kept so a late joiner starts where the room is. */
  @Property({ type: 'json', nullable: true })
  viewState: ViewState | null = null;

  /** Increases with each view update; clients drop anything older than what they hold. */
  @Property({ type: 'integer', default: 0 })
  viewSequence: number = 0;

  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  openedAt: Date | null = null;

  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  closedAt: Date | null = null;

  @ManyToOne(() => User, { ref: true, nullable: true })
  closedBy: Ref<User> | null = null;

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
