import { Entity, ManyToOne, OneToOne, Property, type Ref } from '@mikro-orm/core';
import type { StructureSource } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ImageSeries } from '../imaging/image-series.entity';
import { User } from '../users/user.entity';

/**
 * The one label map of a series: its voxels (uint8 or uint16, on the series' own grid) in the
 * file store under `storageKey`, as `shared/src/api/structures.ts` lays them out.
 */
@Entity({ tableName: 'label_map' })
export class LabelMap extends BaseEntity {
  @OneToOne(() => ImageSeries, { ref: true, owner: true, unique: true, deleteRule: 'cascade' })
  series: Ref<ImageSeries>;

  @Property({ type: 'string', length: 16 })
  source: StructureSource;

  @Property({ type: 'string', length: 8 })
  dataType: 'uint8' | 'uint16';

  /** Path of the label map body inside the file store. */
  @Property({ type: 'string', length: 80 })
  storageKey: string;

  @Property({ type: 'integer' })
  byteLength: number;

  @ManyToOne(() => User, { ref: true })
  importedBy: Ref<User>;

  constructor(fields: {
    series: Ref<ImageSeries>;
    source: StructureSource;
    dataType: 'uint8' | 'uint16';
    storageKey: string;
    byteLength: number;
    importedBy: Ref<User>;
  }) {
    super();
    this.series = fields.series;
    this.source = fields.source;
    this.dataType = fields.dataType;
    this.storageKey = fields.storageKey;
    this.byteLength = fields.byteLength;
    this.importedBy = fields.importedBy;
  }
}
