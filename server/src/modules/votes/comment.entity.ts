import { Entity, Index, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { User } from '../users/user.entity';

/** A comment on an agenda item, answering another one when `parent` is set. */
@Entity({ tableName: 'item_comment' })
export class ItemComment extends BaseEntity {
  @ManyToOne(() => AgendaItem, { ref: true, deleteRule: 'cascade' })
  @Index()
  agendaItem: Ref<AgendaItem>;

  @ManyToOne(() => ItemComment, { ref: true, nullable: true, deleteRule: 'cascade' })
  parent: Ref<ItemComment> | null = null;

  @ManyToOne(() => User, { ref: true })
  author: Ref<User>;

  @Property({ type: 'text' })
  body: string;

  /** Marked by the chair: the comment goes into the minutes. */
  @Property({ type: 'boolean' })
  isForMinutes: boolean = false;

  constructor(fields: { agendaItem: Ref<AgendaItem>; author: Ref<User>; body: string }) {
    super();
    this.agendaItem = fields.agendaItem;
    this.author = fields.author;
    this.body = fields.body;
  }
}
