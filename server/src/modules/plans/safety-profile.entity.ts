import { Entity, Property, Unique } from '@mikro-orm/core';
import type { StructureKind, StructureRule } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';

/**
 * The thresholds that turn an assessment's figures into a verdict, each
 * with where it comes from. At most one profile is the default: a partial unique index keeps
 * two from ever being marked so.
 */
@Entity({ tableName: 'safety_profile' })
@Unique({
  name: 'safety_profile_single_default',
  expression:
    'create unique index "safety_profile_single_default" on "safety_profile" ("is_default") ' +
    'where "is_default"',
})
export class SafetyProfile extends BaseEntity {
  @Property({ type: 'string', length: 80 })
  @Unique()
  name: string;

  @Property({ type: 'json' })
  structureRules: StructureRule[];

  @Property({ type: 'double' })
  marginTargetMm: number;

  @Property({ type: 'text' })
  marginTargetSource: string;

  @Property({ type: 'double' })
  marginMinimumMm: number;

  @Property({ type: 'text' })
  marginMinimumSource: string;

  @Property({ type: 'double' })
  heatSinkDiameterMm: number;

  @Property({ type: 'double' })
  heatSinkDistanceMm: number;

  @Property({ type: 'json' })
  heatSinkKinds: StructureKind[];

  @Property({ type: 'text' })
  heatSinkSource: string;

  @Property({ type: 'double' })
  maximumAngulationDeg: number;

  @Property({ type: 'text' })
  angulationSource: string;

  @Property({ type: 'double' })
  minimumParenchymaBeforeTumourMm: number;

  @Property({ type: 'text' })
  parenchymaSource: string;

  @Property({ type: 'smallint' })
  maximumCapsuleCrossings: number;

  @Property({ type: 'text' })
  capsuleSource: string;

  @Property({ type: 'double', default: 2 })
  physicsToleranceMm: number;

  @Property({ type: 'text' })
  physicsToleranceSource: string;

  @Property({ type: 'double', default: 2 })
  rehearsalToleranceMm: number;

  @Property({ type: 'text', default: '' })
  rehearsalToleranceSource: string;

  /**
   * The version the thresholds are at. A version that an assessment used is frozen in
   * `SafetyProfileVersion`; editing it makes the next version.
   */
  @Property({ type: 'integer', default: 1 })
  version = 1;

  @Property({ type: 'boolean' })
  isDefault = false;

  constructor(fields: Omit<SafetyProfileFields, 'isDefault'>) {
    super();
    this.name = fields.name;
    this.structureRules = fields.structureRules;
    this.marginTargetMm = fields.marginTargetMm;
    this.marginTargetSource = fields.marginTargetSource;
    this.marginMinimumMm = fields.marginMinimumMm;
    this.marginMinimumSource = fields.marginMinimumSource;
    this.heatSinkDiameterMm = fields.heatSinkDiameterMm;
    this.heatSinkDistanceMm = fields.heatSinkDistanceMm;
    this.heatSinkKinds = fields.heatSinkKinds;
    this.heatSinkSource = fields.heatSinkSource;
    this.maximumAngulationDeg = fields.maximumAngulationDeg;
    this.angulationSource = fields.angulationSource;
    this.minimumParenchymaBeforeTumourMm = fields.minimumParenchymaBeforeTumourMm;
    this.parenchymaSource = fields.parenchymaSource;
    this.maximumCapsuleCrossings = fields.maximumCapsuleCrossings;
    this.capsuleSource = fields.capsuleSource;
    this.physicsToleranceMm = fields.physicsToleranceMm;
    this.physicsToleranceSource = fields.physicsToleranceSource;
    this.rehearsalToleranceMm = fields.rehearsalToleranceMm;
    this.rehearsalToleranceSource = fields.rehearsalToleranceSource;
  }
}

/** Every threshold field of a safety profile (the body of its create and replace requests). */
export type SafetyProfileFields = Pick<
  SafetyProfile,
  | 'name'
  | 'structureRules'
  | 'marginTargetMm'
  | 'marginTargetSource'
  | 'marginMinimumMm'
  | 'marginMinimumSource'
  | 'heatSinkDiameterMm'
  | 'heatSinkDistanceMm'
  | 'heatSinkKinds'
  | 'heatSinkSource'
  | 'maximumAngulationDeg'
  | 'angulationSource'
  | 'minimumParenchymaBeforeTumourMm'
  | 'parenchymaSource'
  | 'maximumCapsuleCrossings'
  | 'capsuleSource'
  | 'physicsToleranceMm'
  | 'physicsToleranceSource'
  | 'rehearsalToleranceMm'
  | 'rehearsalToleranceSource'
  | 'isDefault'
>;
