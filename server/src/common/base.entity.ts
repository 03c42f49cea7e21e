import { randomUUID } from 'node:crypto';
import { PrimaryKey, Property } from '@mikro-orm/core';

/** Every entity: a random UUID (no counts leak through ids) and its timestamps. */
export abstract class BaseEntity {
  @PrimaryKey({ type: 'uuid' })
  id: string = randomUUID();

  @Property({ type: 'Date', columnType: 'timestamptz' })
  createdAt: Date = new Date();

  @Property({ type: 'Date', columnType: 'timestamptz', onUpdate: () => new Date() })
  updatedAt: Date = new Date();
}
