import { Entity, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import { BaseEntity } from '../../common/base.entity';
import { User } from '../users/user.entity';
import { ClinicalCase } from './case.entity';

/** How a panel left force: replaced by a correction, or withdrawn. */
export type LabPanelRetirement = 'superseded' | 'withdrawn';

type AscitesGrade = 'none' | 'mild' | 'moderate-severe';
type EncephalopathyGrade = 'none' | 'grade-1-2' | 'grade-3-4';

/**
 * A set of labs as entered: values keep the unit they were entered in, so nothing is lost. A
 * panel is never edited nor deleted while its case lives: a correction is a new panel that
 * supersedes it, a withdrawal marks it withdrawn; either keeps the reason, who and when
 * (`retired*`). The panel in force is `panelInForce` of shared/ (see lab-panel-in-force.ts).
 */
@Entity({ tableName: 'lab_panel' })
export class LabPanel extends BaseEntity {
  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  clinicalCase: Ref<ClinicalCase>;

  @Property({ type: 'Date', columnType: 'timestamptz' })
  takenAt: Date;

  @Property({ type: 'double' })
  bilirubinValue: number;

  @Property({ type: 'string', length: 8 })
  bilirubinUnit: 'mg/dL' | 'umol/L';

  @Property({ type: 'double' })
  albuminValue: number;

  @Property({ type: 'string', length: 8 })
  albuminUnit: 'g/dL' | 'g/L';

  @Property({ type: 'double' })
  inr: number;

  @Property({ type: 'double' })
  creatinineValue: number;

  @Property({ type: 'string', length: 8 })
  creatinineUnit: 'mg/dL' | 'umol/L';

  @Property({ type: 'double' })
  sodiumMmolL: number;

  @Property({ type: 'double' })
  plateletsE9L: number;

  @Property({ type: 'string', length: 16 })
  ascites: AscitesGrade;

  @Property({ type: 'string', length: 16 })
  encephalopathy: EncephalopathyGrade;

  @Property({ type: 'boolean' })
  dialysisTwiceInPastWeek: boolean;

  @ManyToOne(() => User, { ref: true })
  enteredBy: Ref<User>;

  /** Null while the panel is in the running for "in force". */
  @Property({ type: 'string', length: 16, nullable: true })
  retirement: LabPanelRetirement | null = null;

  /** The correction that replaced this panel (retirement 'superseded'). */
  @ManyToOne(() => LabPanel, { ref: true, nullable: true, deleteRule: 'set null' })
  supersededBy: Ref<LabPanel> | null = null;

  @Property({ type: 'text', nullable: true })
  retiredReason: string | null = null;

  @ManyToOne(() => User, { ref: true, nullable: true })
  retiredBy: Ref<User> | null = null;

  @Property({ type: 'Date', columnType: 'timestamptz', nullable: true })
  retiredAt: Date | null = null;

  constructor(
    clinicalCase: Ref<ClinicalCase>,
    enteredBy: Ref<User>,
    values: {
      takenAt: Date;
      bilirubin: { value: number; unit: 'mg/dL' | 'umol/L' };
      albumin: { value: number; unit: 'g/dL' | 'g/L' };
      inr: number;
      creatinine: { value: number; unit: 'mg/dL' | 'umol/L' };
      sodiumMmolL: number;
      plateletsE9L: number;
      ascites: AscitesGrade;
      encephalopathy: EncephalopathyGrade;
      dialysisTwiceInPastWeek: boolean;
    },
  ) {
    super();
    this.clinicalCase = clinicalCase;
    this.enteredBy = enteredBy;
    this.takenAt = values.takenAt;
    this.bilirubinValue = values.bilirubin.value;
    this.bilirubinUnit = values.bilirubin.unit;
    this.albuminValue = values.albumin.value;
    this.albuminUnit = values.albumin.unit;
    this.inr = values.inr;
    this.creatinineValue = values.creatinine.value;
    this.creatinineUnit = values.creatinine.unit;
    this.sodiumMmolL = values.sodiumMmolL;
    this.plateletsE9L = values.plateletsE9L;
    this.ascites = values.ascites;
    this.encephalopathy = values.encephalopathy;
    this.dialysisTwiceInPastWeek = values.dialysisTwiceInPastWeek;
  }
}
