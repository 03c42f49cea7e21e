import { Entity, Index, PrimaryKey, Property } from '@mikro-orm/core';

/** The table connect-pg-simple reads and writes (its documented schema), kept in our migrations. */
@Entity({ tableName: 'http_session' })
export class HttpSession {
  @PrimaryKey({ type: 'string', columnType: 'varchar' })
  sid!: string;

  @Property({ type: 'json' })
  sess!: Record<string, unknown>;

  @Property({ type: 'Date', columnType: 'timestamp(6)' })
  @Index()
  expire!: Date;
}
