import { Entity, Index, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import type { AssessmentResult, AssessmentSnapshot, AssessmentStatus } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { SafetyProfile } from '../plans/safety-profile.entity';
import { User } from '../users/user.entity';

/**
 * One assessment run of a needle plan: the queued job, its progress and, once done, the
 * engine's result. `snapshot` is the frozen record of everything it runs on (plan geometry,
 * profile versions, label-map version, engine version) and `inputsHash` is the hash of that
 * snapshot: the worker computes from the snapshot only, and a result is reused only for an
 * identical one. A partial unique index lets at most one assessment per (plan, snapshot) be
 * active, so concurrent requests meet on the same row.
 */
@Entity({ tableName: 'assessment' })
@Unique({
  name: 'assessment_one_active',
  expression:
    'create unique index "assessment_one_active" on "assessment" ("plan_id", "inputs_hash") ' +
    "where \"status\" in ('queued', 'running')",
})
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

  /** Null only on assessments stored before snapshots were kept. */
  @Property({ type: 'json', nullable: true })
  snapshot: AssessmentSnapshot | null;

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
    snapshot: AssessmentSnapshot;
  }) {
    super();
    this.plan = fields.plan;
    this.inputsHash = fields.inputsHash;
    this.engineVersion = fields.engineVersion;
    this.requestedBy = fields.requestedBy;
    this.safetyProfile = fields.safetyProfile;
    this.snapshot = fields.snapshot;
  }
}
