import { Entity, ManyToOne, Property, Unique, ref, type Ref } from '@mikro-orm/core';
import type {
  AblationModality,
  ApplicatorCalibration,
  ZoneTableRow,
  ZoneTableSource,
} from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ApplicatorProfile } from './applicator-profile.entity';

/**
 * One frozen version of an applicator profile: written the first time an assessment uses that
 * version, never changed afterwards (but for the heating model's calibration, which is derived
 * from the frozen content and stored once so that no worker fits it again).
 */
@Entity({ tableName: 'applicator_profile_version' })
@Unique({ properties: ['profile', 'version'] })
export class ApplicatorProfileVersion extends BaseEntity {
  @ManyToOne(() => ApplicatorProfile, { ref: true })
  profile: Ref<ApplicatorProfile>;

  @Property({ type: 'integer' })
  version: number;

  @Property({ type: 'string', length: 80 })
  name: string;

  @Property({ type: 'string', length: 16 })
  modality: AblationModality;

  @Property({ type: 'smallint' })
  gaugeG: number;

  @Property({ type: 'double' })
  workingLengthMm: number;

  @Property({ type: 'double' })
  activeLengthMm: number;

  @Property({ type: 'json' })
  zoneTable: ZoneTableRow[];

  @Property({ type: 'string', length: 16 })
  zoneTableSource: ZoneTableSource;

  @Property({ type: 'string', length: 300, nullable: true })
  zoneTableReference: string | null;

  /** The heating model fitted to this version's zone table, once some assessment needed it. */
  @Property({ type: 'json', nullable: true })
  calibration: ApplicatorCalibration | null = null;

  constructor(profile: ApplicatorProfile) {
    super();
    this.profile = ref(profile);
    this.version = profile.version;
    this.name = profile.name;
    this.modality = profile.modality;
    this.gaugeG = profile.gaugeG;
    this.workingLengthMm = profile.workingLengthMm;
    this.activeLengthMm = profile.activeLengthMm;
    this.zoneTable = profile.zoneTable;
    this.zoneTableSource = profile.zoneTableSource;
    this.zoneTableReference = profile.zoneTableReference;
  }
}
