import { Entity, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';

/**
 * One UID replaced on ingest, per case: the same original gets the same replacement in every
 * series of the case. Keyed by a salted hash of the original (`CaseDeidentificationKeys`), never
 * by the original itself.
 */
@Entity({ tableName: 'uid_replacement' })
@Unique({ properties: ['clinicalCase', 'originalHash'] })
export class UidReplacement extends BaseEntity {
  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  clinicalCase: Ref<ClinicalCase>;

  /** HMAC-SHA256 of the original UID under the case's salt, 64 hex digits. */
  @Property({ type: 'string', length: 64 })
  originalHash: string;

  @Property({ type: 'string', length: 64 })
  replacementUid: string;

  constructor(clinicalCase: Ref<ClinicalCase>, originalHash: string, replacementUid: string) {
    super();
    this.clinicalCase = clinicalCase;
    this.originalHash = originalHash;
    this.replacementUid = replacementUid;
  }
}
