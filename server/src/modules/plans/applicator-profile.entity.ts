import { Entity, Property, Unique } from '@mikro-orm/core';
import type { AblationModality, ZoneTableRow } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';

/**
 * An ablation applicator and the zone table its maker promises (DESIGN.md §5). Plans refer to
 * a profile by id inside their applicator list; a retired profile stays readable for them but
 * is not offered for new plans.
 */
@Entity({ tableName: 'applicator_profile' })
export class ApplicatorProfile extends BaseEntity {
  @Property({ type: 'string', length: 80 })
  @Unique()
  name: string;

  @Property({ type: 'string', length: 16 })
  modality: AblationModality;

  @Property({ type: 'smallint' })
  gaugeG: number;

  @Property({ type: 'double' })
  workingLengthMm: number;

  @Property({ type: 'double' })
  activeLengthMm: number;

  /** Rows of power (W) × time (s) → zone length, width and centre offset behind the tip (mm). */
  @Property({ type: 'json' })
  zoneTable: ZoneTableRow[];

  @Property({ type: 'text', nullable: true })
  notes: string | null = null;

  @Property({ type: 'boolean' })
  isRetired = false;

  constructor(fields: {
    name: string;
    modality: AblationModality;
    gaugeG: number;
    workingLengthMm: number;
    activeLengthMm: number;
    zoneTable: ZoneTableRow[];
  }) {
    super();
    this.name = fields.name;
    this.modality = fields.modality;
    this.gaugeG = fields.gaugeG;
    this.workingLengthMm = fields.workingLengthMm;
    this.activeLengthMm = fields.activeLengthMm;
    this.zoneTable = fields.zoneTable;
  }
}
