import { Entity, Index, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import type {
  DeidentificationRecord,
  SeriesCompression,
  GridDimensions,
  ImageModality,
  Vec3,
  VolumeValueUnit,
} from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { User } from '../users/user.entity';
import type { StoredDicomHeader } from './dicom-json';

/** How stored values relate to the scanner's: value = round(stored · slope + intercept). */
export interface AppliedRescale {
  slope: number;
  intercept: number;
  /** False when slices carried different slopes or intercepts (each was applied to its own). */
  isUniform: boolean;
}

/**
 * A de-identified image series of a case: the grid in patient space (LPS, millimetres;
 * DICOM PS3.3 C.7.6.2.1.1), the stored volume (int16 in the file store under
 * `storageKey`) and the cleaned header of its first slice. UIDs are the case's replacements.
 */
@Entity({ tableName: 'image_series' })
@Unique({ properties: ['clinicalCase', 'seriesUid'] })
export class ImageSeries extends BaseEntity {
  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  @Index()
  clinicalCase: Ref<ClinicalCase>;

  @Property({ type: 'string', length: 2 })
  modality: ImageModality;

  /** [columns, rows, slices]. */
  @Property({ type: 'json' })
  dimensions: GridDimensions;

  /** [Δi, Δj, Δk], millimetres. */
  @Property({ type: 'json' })
  spacingMm: Vec3;

  /** Centre of voxel (0, 0, 0), LPS, millimetres. */
  @Property({ type: 'json' })
  originLps: Vec3;

  /** Unit vectors along i, j and k, LPS. */
  @Property({ type: 'json' })
  direction: [Vec3, Vec3, Vec3];

  @Property({ type: 'integer' })
  sliceCount: number;

  @Property({ type: 'string', length: 16 })
  valueUnit: VolumeValueUnit;

  @Property({ type: 'json' })
  rescaleApplied: AppliedRescale;

  @Property({ type: 'integer' })
  valueMin: number;

  @Property({ type: 'integer' })
  valueMax: number;

  @Property({ type: 'double' })
  windowCentre: number;

  @Property({ type: 'double' })
  windowWidth: number;

  @Property({ type: 'integer', nullable: true })
  seriesNumber: number | null = null;

  /** Replacement Series, Study and Frame of Reference UIDs (never the originals). */
  @Property({ type: 'string', length: 64 })
  seriesUid: string;

  @Property({ type: 'string', length: 64 })
  studyUid: string;

  @Property({ type: 'string', length: 64 })
  frameOfReferenceUid: string;

  /** Path of the volume body inside the file store. */
  @Property({ type: 'string', length: 80 })
  storageKey: string;

  @Property({ type: 'integer' })
  byteLength: number;

  /** The cleaned header of the first slice (DICOM JSON model, new file meta). */
  @Property({ type: 'json' })
  dicomHeader: StoredDicomHeader;

  @Property({ type: 'json' })
  deidentification: DeidentificationRecord;

  /** The files' transfer syntax and any lossy compression they went through (null before it was kept). */
  @Property({ type: 'json', nullable: true })
  compression: SeriesCompression | null = null;

  @ManyToOne(() => User, { ref: true })
  uploadedBy: Ref<User>;

  constructor(fields: {
    clinicalCase: Ref<ClinicalCase>;
    uploadedBy: Ref<User>;
    modality: ImageModality;
    dimensions: GridDimensions;
    spacingMm: Vec3;
    originLps: Vec3;
    direction: [Vec3, Vec3, Vec3];
    valueUnit: VolumeValueUnit;
    rescaleApplied: AppliedRescale;
    valueMin: number;
    valueMax: number;
    windowCentre: number;
    windowWidth: number;
    seriesUid: string;
    studyUid: string;
    frameOfReferenceUid: string;
    storageKey: string;
    byteLength: number;
    dicomHeader: StoredDicomHeader;
    deidentification: DeidentificationRecord;
  }) {
    super();
    this.clinicalCase = fields.clinicalCase;
    this.uploadedBy = fields.uploadedBy;
    this.modality = fields.modality;
    this.dimensions = fields.dimensions;
    this.spacingMm = fields.spacingMm;
    this.originLps = fields.originLps;
    this.direction = fields.direction;
    this.sliceCount = fields.dimensions[2];
    this.valueUnit = fields.valueUnit;
    this.rescaleApplied = fields.rescaleApplied;
    this.valueMin = fields.valueMin;
    this.valueMax = fields.valueMax;
    this.windowCentre = fields.windowCentre;
    this.windowWidth = fields.windowWidth;
    this.seriesUid = fields.seriesUid;
    this.studyUid = fields.studyUid;
    this.frameOfReferenceUid = fields.frameOfReferenceUid;
    this.storageKey = fields.storageKey;
    this.byteLength = fields.byteLength;
    this.dicomHeader = fields.dicomHeader;
    this.deidentification = fields.deidentification;
  }
}
