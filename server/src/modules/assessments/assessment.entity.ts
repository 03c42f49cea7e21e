import { Entity, Index, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import type { AssessmentResult, AssessmentStatus } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { SafetyProfile } from '../plans/safety-profile.entity';
import { User } from '../users/user.entity';

/**
 * One assessment run of a needle plan (DESIGN.md §7): the queued job, its progress and, once
 * done, the engine's result. `inputsHash` identifies what went in (plan, series, structures,
 * profiles, engine version), so an unchanged plan need not be assessed twice.
 */
@Entity({ tableName: 'assessment' })
export class Assessment extends BaseEntity {
  @ManyToOne(() => NeedlePlan, { ref: true, deleteRule: 'cascade' })
  @Index()
  plan: Ref<NeedlePlan>;

  @Property({ type: 'string', length: 16 })
  status: AssessmentStatus = 'queued';

  /** 0–1. */
  @Property({ type: 'double' })
  progress = 0;

  @Property({ type: 'text' })
  @Index()
  inputsHash: string;

  @Property({ type: 'text' })
  engineVersion: string;

  @Property({ type: 'json', nullable: true })
  result: AssessmentResult | null = null;

  @Property({ type: 'text', nullable: true })
  error: string | null = null;

  @Property({ type: 'integer', default: 0 })
  attempts = 0;

  @Property({ type: 'text', nullable: true })
  jobId: string | null = null;

  @ManyToOne(() => User, { ref: true })
  requestedBy: Ref<User>;

  @ManyToOne(() => SafetyProfile, { ref: true })
  safetyProfile: Ref<SafetyProfile>;

  constructor(fields: {
    plan: Ref<NeedlePlan>;
    inputsHash: string;
    engineVersion: string;
    requestedBy: Ref<User>;
    safetyProfile: Ref<SafetyProfile>;
  }) {
    super();
    this.plan = fields.plan;
    this.inputsHash = fields.inputsHash;
    this.engineVersion = fields.engineVersion;
    this.requestedBy = fields.requestedBy;
    this.safetyProfile = fields.safetyProfile;
  }
}
