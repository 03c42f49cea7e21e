import {
  Collection,
  Entity,
  EntityRepositoryType,
  Index,
  ManyToOne,
  OneToMany,
  Property,
  Unique,
  type Ref,
} from '@mikro-orm/core';
import type { CaseStatus, PrimaryDiagnosis, RehearsalSettings, Sex } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { Board } from '../boards/board.entity';
import { User } from '../users/user.entity';
import { LabPanel } from './lab-panel.entity';
import { Lesion } from './lesion.entity';
import { CaseRepository } from './case.repository';

/**
 * A patient's case before the board; demographics kept minimal (case code, year of birth, sex),
 * never a name or a hospital number.
 */
@Entity({ tableName: 'clinical_case', repository: () => CaseRepository })
export class ClinicalCase extends BaseEntity {
  [EntityRepositoryType]?: CaseRepository;

  @Property({ type: 'string', length: 24 })
  @Unique()
  caseCode: string;

  @ManyToOne(() => Board, { ref: true })
  @Index()
  board: Ref<Board>;

  @ManyToOne(() => User, { ref: true })
  presenter: Ref<User>;

  @Property({ type: 'smallint' })
  yearOfBirth: number;

  @Property({ type: 'string', length: 16 })
  sex: Sex;

  @Property({ type: 'string', length: 16 })
  primaryDiagnosis: PrimaryDiagnosis;

  @Property({ type: 'string', length: 24 })
  @Index()
  status: CaseStatus = 'draft';

  @Property({ type: 'smallint', nullable: true })
  ecogPerformanceStatus: number | null = null;

  @Property({ type: 'boolean', nullable: true })
  hasVascularInvasion: boolean | null = null;

  @Property({ type: 'boolean', nullable: true })
  hasExtrahepaticSpread: boolean | null = null;

  /** The case's own insertion-rehearsal settings; null: the defaults. */
  @Property({ type: 'json', nullable: true })
  rehearsal: RehearsalSettings | null = null;

  @OneToMany(() => Lesion, (lesion) => lesion.clinicalCase, { orphanRemoval: true })
  lesions = new Collection<Lesion>(this);

  @OneToMany(() => LabPanel, (panel) => panel.clinicalCase, { orphanRemoval: true })
  labPanels = new Collection<LabPanel>(this);

  constructor(fields: {
    caseCode: string;
    board: Ref<Board>;
    presenter: Ref<User>;
    yearOfBirth: number;
    sex: Sex;
    primaryDiagnosis: PrimaryDiagnosis;
  }) {
    super();
    this.caseCode = fields.caseCode;
    this.board = fields.board;
    this.presenter = fields.presenter;
    this.yearOfBirth = fields.yearOfBirth;
    this.sex = fields.sex;
    this.primaryDiagnosis = fields.primaryDiagnosis;
  }
}
