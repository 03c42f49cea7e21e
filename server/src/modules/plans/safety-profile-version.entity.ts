import { Entity, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import type { SafetyProfileBody } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { SafetyProfile } from './safety-profile.entity';

/**
 * One frozen version of a safety profile's thresholds: written the first time an assessment
 * uses that version, never changed afterwards.
 */
@Entity({ tableName: 'safety_profile_version' })
@Unique({ properties: ['profile', 'version'] })
export class SafetyProfileVersion extends BaseEntity {
  @ManyToOne(() => SafetyProfile, { ref: true })
  profile: Ref<SafetyProfile>;

  @Property({ type: 'integer' })
  version: number;

  @Property({ type: 'json' })
  body: SafetyProfileBody;

  constructor(fields: { profile: Ref<SafetyProfile>; version: number; body: SafetyProfileBody }) {
    super();
    this.profile = fields.profile;
    this.version = fields.version;
    this.body = fields.body;
  }
}
