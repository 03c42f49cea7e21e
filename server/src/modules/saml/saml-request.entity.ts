import { Entity, Index, PrimaryKey, Property } from '@mikro-orm/core';

/** AuthnRequest IDs awaiting their response (node-saml's cache provider, shared by every process). */
@Entity({ tableName: 'saml_request' })
export class SamlRequest {
  @PrimaryKey({ type: 'string', length: 256 })
  requestId!: string;

  @Property({ type: 'text' })
  value!: string;

  @Property({ type: 'Date', columnType: 'timestamptz' })
  @Index()
  createdAt!: Date;
}
