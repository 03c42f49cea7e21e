import { Entity, OneToOne, Property, type Ref } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';
import { Meeting } from './meeting.entity';

/**
 * The minutes of a closed meeting, frozen: `content` is the JSON text written once when the chair
 * closed the meeting and never rewritten (served byte for byte), `sha256` its digest.
 */
@Entity({ tableName: 'minutes' })
export class Minutes extends BaseEntity {
  @OneToOne(() => Meeting, { ref: true, owner: true, unique: true, deleteRule: 'cascade' })
  meeting: Ref<Meeting>;

  @Property({ type: 'text' })
  content: string;

  @Property({ type: 'string', length: 64 })
  sha256: string;

  @Property({ type: 'Date', columnType: 'timestamptz' })
  frozenAt: Date = new Date();

  constructor(fields: { meeting: Ref<Meeting>; content: string; sha256: string }) {
    super();
    this.meeting = fields.meeting;
    this.content = fields.content;
    this.sha256 = fields.sha256;
  }
}
