import { Entity, Property, Unique } from '@mikro-orm/core';
import type { AblationModality, ZoneTableRow, ZoneTableSource } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';

/**
 * An ablation applicator and the zone table its maker promises . Plans refer to
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

  /** Where the zone table comes from (ex vivo, in vivo, the maker's data, the institution's). */
  @Property({ type: 'string', length: 16 })
  zoneTableSource: ZoneTableSource;

  @Property({ type: 'string', length: 300, nullable: true })
  zoneTableReference: string | null = null;

  /**
   * The version the profile's content is at. A version that an assessment used is frozen in
   * `ApplicatorProfileVersion`; editing it makes the next version.
   */
  @Property({ type: 'integer', default: 1 })
  version = 1;

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
    zoneTableSource: ZoneTableSource;
  }) {
    super();
    this.name = fields.name;
    this.modality = fields.modality;
    this.gaugeG = fields.gaugeG;
    this.workingLengthMm = fields.workingLengthMm;
    this.activeLengthMm = fields.activeLengthMm;
    this.zoneTable = fields.zoneTable;
    this.zoneTableSource = fields.zoneTableSource;
  }
}
