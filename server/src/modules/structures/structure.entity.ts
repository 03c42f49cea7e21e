import { Entity, Index, ManyToOne, Property, Unique, type Ref } from '@mikro-orm/core';
import type { StructureKind, StructureSource } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { Lesion } from '../cases/lesion.entity';
import { ImageSeries } from '../imaging/image-series.entity';

/**
 * One label value of a series' label map and what it stands for. The kind
 * is null until someone names it; the volume is voxelCount × the series' voxel volume.
 */
@Entity({ tableName: 'structure' })
@Unique({ properties: ['series', 'labelValue'] })
export class Structure extends BaseEntity {
  @ManyToOne(() => ImageSeries, { ref: true, deleteRule: 'cascade' })
  @Index()
  series: Ref<ImageSeries>;

  @Property({ type: 'integer' })
  labelValue: number;

  @Property({ type: 'string', length: 32, nullable: true })
  kind: StructureKind | null;

  @Property({ type: 'string', length: 80 })
  name: string;

  @Property({ type: 'integer' })
  voxelCount: number;

  @Property({ type: 'double' })
  volumeMl: number;

  @Property({ type: 'string', length: 16 })
  source: StructureSource;

  /** The lesion of the case's Summary this tumour structure shows (suggested, then confirmed). */
  @ManyToOne(() => Lesion, { ref: true, nullable: true, deleteRule: 'set null' })
  lesion: Ref<Lesion> | null = null;

  /** Whether the presenter confirmed the link (a suggestion only until then). */
  @Property({ type: 'boolean', default: false })
  isLesionConfirmed = false;

  constructor(fields: {
    series: Ref<ImageSeries>;
    labelValue: number;
    kind: StructureKind | null;
    name: string;
    voxelCount: number;
    volumeMl: number;
    source: StructureSource;
  }) {
    super();
    this.series = fields.series;
    this.labelValue = fields.labelValue;
    this.kind = fields.kind;
    this.name = fields.name;
    this.voxelCount = fields.voxelCount;
    this.volumeMl = fields.volumeMl;
    this.source = fields.source;
  }
}
