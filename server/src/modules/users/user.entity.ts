import { Entity, Index, Property, Unique } from '@mikro-orm/core';
import type { Role } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';

@Entity({ tableName: 'app_user' })
export class User extends BaseEntity {
  @Property({ type: 'string', length: 254 })
  @Unique()
  email: string;

  @Property({ type: 'string', length: 120 })
  displayName: string;

  /** argon2id PHC string; null for accounts that only sign in through SSO. */
  @Property({ type: 'text', nullable: true, hidden: true, lazy: true })
  passwordHash: string | null = null;

  @Property({ type: 'text[]' })
  roles: Role[] = [];

  @Property({ type: 'boolean' })
  isActive = true;

  /** Base32 TOTP secret (RFC 6238); set at enrolment, in force once `totpEnabledAt` is set. */
  @Property({ type: 'text', nullable: true, hidden: true, lazy: true })
  totpSecret: string | null = null;

  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  totpEnabledAt: Date | null = null;

  /** The time step of the last TOTP code accepted: a code is good once (RFC 6238 §5.2). */
  @Property({ type: 'integer', nullable: true, hidden: true, lazy: true })
  totpLastStep: number | null = null;

  /** SAML NameID and issuer of the identity provider that vouched for this user. */
  @Property({ type: 'text', nullable: true })
  @Index()
  samlNameId: string | null = null;

  @Property({ type: 'text', nullable: true })
  samlIssuer: string | null = null;

  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  lastSignInAt: Date | null = null;

  constructor(email: string, displayName: string) {
    super();
    this.email = email.toLowerCase();
    this.displayName = displayName;
  }
}
