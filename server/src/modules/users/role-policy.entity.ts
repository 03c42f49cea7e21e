import { Entity, PrimaryKey, Property } from '@mikro-orm/core';
import type { Role } from '@emberline/shared';

/** Per-role sign-in rules an administrator sets (for now: whether a second factor is required). */
@Entity({ tableName: 'role_policy' })
export class RolePolicy {
  @PrimaryKey({ type: 'string', length: 40 })
  role: Role;

  @Property({ type: 'boolean' })
  requiresTotp = false;

  @Property({ type: 'Date', columnType: 'timestamptz', onUpdate: () => new Date() })
  updatedAt: Date = new Date();

  constructor(role: Role) {
    this.role = role;
  }
}
