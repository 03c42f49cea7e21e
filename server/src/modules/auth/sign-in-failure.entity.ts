import { Entity, Index, Property } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';

/**
 * One failed sign-in: the counts the sign-in limits read. In PostgreSQL so that every server
 * process counts the same attempts; rows older than the window are deleted as new ones come.
 */
@Entity({ tableName: 'sign_in_failure' })
@Index({ properties: ['account', 'createdAt'] })
@Index({ properties: ['address', 'createdAt'] })
export class SignInFailure extends BaseEntity {
  /** The client's address as Express reads it (`trust proxy` decides which header counts). */
  @Property({ type: 'string', length: 64 })
  address: string;

  /** The e-mail tried (lower case), or `saml` for a refused single sign-on response. */
  @Property({ type: 'string', length: 320 })
  account: string;

  constructor(address: string, account: string) {
    super();
    this.address = address;
    this.account = account;
  }
}
