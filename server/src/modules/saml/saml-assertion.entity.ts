import { Entity, Index, PrimaryKey, Property } from '@mikro-orm/core';

/** Assertion IDs already accepted, kept until the assertion expires so none is used twice. */
@Entity({ tableName: 'saml_assertion_seen' })
export class SamlAssertionSeen {
  @PrimaryKey({ type: 'string', length: 256 })
  assertionId!: string;

  @Property({ type: 'Date', columnType: 'timestamptz' })
  @Index()
  expiresAt!: Date;
}
