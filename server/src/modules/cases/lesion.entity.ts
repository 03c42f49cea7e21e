import { Entity, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import type { CouinaudSegment, LesionKind } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from './case.entity';

@Entity({ tableName: 'lesion' })
export class Lesion extends BaseEntity {
  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  clinicalCase: Ref<ClinicalCase>;

  @Property({ type: 'string', length: 4 })
  segment: CouinaudSegment;

  @Property({ type: 'double' })
  diameterMm: number;

  @Property({ type: 'string', length: 24 })
  kind: LesionKind;

  constructor(
    clinicalCase: Ref<ClinicalCase>,
    segment: CouinaudSegment,
    diameterMm: number,
    kind: LesionKind,
  ) {
    super();
    this.clinicalCase = clinicalCase;
    this.segment = segment;
    this.diameterMm = diameterMm;
    this.kind = kind;
  }
}
