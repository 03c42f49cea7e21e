import { Entity, Index, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import type { AnnotationKind, Vec3 } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { ImageSeries } from '../imaging/image-series.entity';
import { Meeting } from '../meetings/meeting.entity';
import { User } from '../users/user.entity';

/** A point, line or note on a series of a case, in patient LPS millimetres. */
@Entity({ tableName: 'annotation' })
export class Annotation extends BaseEntity {
  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  @Index()
  clinicalCase: Ref<ClinicalCase>;

  @ManyToOne(() => ImageSeries, { ref: true, deleteRule: 'cascade' })
  series: Ref<ImageSeries>;

  @ManyToOne(() => User, { ref: true })
  author: Ref<User>;

  /** The meeting in session when it was made, if any. */
  @ManyToOne(() => Meeting, { ref: true, nullable: true, deleteRule: 'set null' })
  meeting: Ref<Meeting> | null = null;

  @Property({ type: 'string', length: 8 })
  kind: AnnotationKind;

  @Property({ type: 'json' })
  points: Vec3[];

  @Property({ type: 'text', nullable: true })
  text: string | null = null;

  constructor(fields: {
    clinicalCase: Ref<ClinicalCase>;
    series: Ref<ImageSeries>;
    author: Ref<User>;
    kind: AnnotationKind;
    points: Vec3[];
  }) {
    super();
    this.clinicalCase = fields.clinicalCase;
    this.series = fields.series;
    this.author = fields.author;
    this.kind = fields.kind;
    this.points = fields.points;
  }
}
