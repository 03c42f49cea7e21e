import { Entity, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import type { ThresholdKey } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { User } from '../users/user.entity';

/**
 * One limit of the pre-procedure checklist, with the source of its value. Seeded by the
 * migration (module README, "Default thresholds"); administrators change value and source.
 */
@Entity({ tableName: 'checklist_threshold' })
export class ChecklistThreshold extends BaseEntity {
  @Property({ type: 'string', length: 32 })
  @Unique()
  key: ThresholdKey;

  @Property({ type: 'double' })
  value: number;

  @Property({ type: 'string', length: 24 })
  unit: string;

  @Property({ type: 'string', length: 500 })
  source: string;

  @ManyToOne(() => User, { ref: true, nullable: true })
  updatedBy: Ref<User> | null = null;

  constructor(fields: { key: ThresholdKey; value: number; unit: string; source: string }) {
    super();
    this.key = fields.key;
    this.value = fields.value;
    this.unit = fields.unit;
    this.source = fields.source;
  }
}
