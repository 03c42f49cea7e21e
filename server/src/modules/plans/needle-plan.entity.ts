import {
  Entity,
  EntityRepositoryType,
  Index,
  ManyToOne,
  Property,
  type Ref,
} from '@mikro-orm/core';
import type { PlanStatus, Vec3 } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { ImageSeries } from '../imaging/image-series.entity';
import { User } from '../users/user.entity';
import { PlanRepository } from './plan.repository';

/** One applicator of a plan as stored: points in patient LPS, millimetres, on the plan's series. */
export interface StoredApplicator {
  entry: Vec3;
  target: Vec3;
  profileId: string;
  powerW: number;
  timeS: number;
}

/**
 * A needle plan of a case: one or more applicators drafted on one series.
 * It goes with its case (and its series) when either is deleted.
 */
@Entity({ tableName: 'needle_plan', repository: () => PlanRepository })
export class NeedlePlan extends BaseEntity {
  [EntityRepositoryType]?: PlanRepository;

  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  @Index()
  clinicalCase: Ref<ClinicalCase>;

  @ManyToOne(() => ImageSeries, { ref: true, deleteRule: 'cascade' })
  @Index()
  series: Ref<ImageSeries>;

  @ManyToOne(() => User, { ref: true })
  author: Ref<User>;

  @Property({ type: 'string', length: 80 })
  name: string;

  @Property({ type: 'string', length: 24 })
  status: PlanStatus = 'draft';

  @Property({ type: 'json' })
  applicators: StoredApplicator[];

  @Property({ type: 'text', nullable: true })
  notes: string | null = null;

  constructor(fields: {
    clinicalCase: Ref<ClinicalCase>;
    series: Ref<ImageSeries>;
    author: Ref<User>;
    name: string;
    applicators: StoredApplicator[];
  }) {
    super();
    this.clinicalCase = fields.clinicalCase;
    this.series = fields.series;
    this.author = fields.author;
    this.name = fields.name;
    this.applicators = fields.applicators;
  }
}
