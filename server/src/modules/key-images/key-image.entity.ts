import { Entity, Index, ManyToOne, Property, type Ref } from '@mikro-orm/core';
import type { KeyImagePane, KeyImageViewState } from '@emberline/shared';
import { BaseEntity } from '../../common/base.entity';
import { ClinicalCase } from '../cases/case.entity';
import { ImageSeries } from '../imaging/image-series.entity';
import { User } from '../users/user.entity';

/**
 * A picture of one viewer pane kept on a case, with the view state that made it. The PNG lives
 * in the file store under `storageKey` (never in the database).
 */
@Entity({ tableName: 'key_image' })
export class KeyImage extends BaseEntity {
  @ManyToOne(() => ClinicalCase, { ref: true, deleteRule: 'cascade' })
  @Index()
  clinicalCase: Ref<ClinicalCase>;

  @ManyToOne(() => ImageSeries, { ref: true, deleteRule: 'cascade' })
  series: Ref<ImageSeries>;

  @ManyToOne(() => User, { ref: true })
  author: Ref<User>;

  @Property({ type: 'string', length: 8 })
  pane: KeyImagePane;

  @Property({ type: 'string', length: 200, nullable: true })
  caption: string | null = null;

  @Property({ type: 'json' })
  viewState: KeyImageViewState;

  /** `key-images/<uuid>.png` in the file store. */
  @Property({ type: 'string', length: 64 })
  storageKey: string;

  @Property({ type: 'integer' })
  widthPx: number;

  @Property({ type: 'integer' })
  heightPx: number;

  /** Byte length of the stored PNG. */
  @Property({ type: 'integer' })
  bytes: number;

  constructor(fields: {
    clinicalCase: Ref<ClinicalCase>;
    series: Ref<ImageSeries>;
    author: Ref<User>;
    pane: KeyImagePane;
    viewState: KeyImageViewState;
    storageKey: string;
    widthPx: number;
    heightPx: number;
    bytes: number;
  }) {
    super();
    this.clinicalCase = fields.clinicalCase;
    this.series = fields.series;
    this.author = fields.author;
    this.pane = fields.pane;
    this.viewState = fields.viewState;
    this.storageKey = fields.storageKey;
    this.widthPx = fields.widthPx;
    this.heightPx = fields.heightPx;
    this.bytes = fields.bytes;
  }
}
