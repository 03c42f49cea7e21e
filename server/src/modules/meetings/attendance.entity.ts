import { Entity, Index, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import type { Specialty } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { User } from '../users/user.entity';
import { Meeting } from './meeting.entity';

/**
 * One visit of a member to a meeting: joined the room (`via: 'room'`, left when the last of their
 * sockets leaves) or attended by voting over the API (`via: 'vote'`, joined and left at once).
 * The minutes list each member once, from their first join to their last leave.
 */
@Entity({ tableName: 'attendance' })
@Index({ properties: ['meeting', 'user'] })
export class Attendance extends BaseEntity {
  @ManyToOne(() => Meeting, { ref: true, deleteRule: 'cascade' })
  meeting: Ref<Meeting>;

  @ManyToOne(() => User, { ref: true })
  user: Ref<User>;

  /** The member's specialty on the board when they came. */
  @Property({ type: 'string', length: 40, nullable: true })
  specialty: Specialty | null = null;

  @Property({ type: 'string', length: 8 })
  via: 'room' | 'vote' = 'room';

  @Property({ type: 'Date', columnType: 'timestamptz' })
  joinedAt: Date = new Date();

  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  leftAt: Date | null = null;

  constructor(fields: { meeting: Ref<Meeting>; user: Ref<User>; specialty: Specialty | null }) {
    super();
    this.meeting = fields.meeting;
    this.user = fields.user;
    this.specialty = fields.specialty;
  }
}
