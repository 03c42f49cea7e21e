/**
 * What the assessment derives from each structure kind on its crop, kept in the injected cache
 * under series + kind (with its label values) + crop: the kind's boundary cells packed for
 * exact clearances (geometry/cell-distance.ts), and its interior distance field for vessel
 * calibre — exact (Felzenszwalb & Huttenlocher 2012, anisotropic; geometry/distance-
 * transform.ts), millimetres between voxel centres. The voxels beyond the crop are not seen.
 */
import type { StructureKind } from '../api/structures';
import { boundaryVoxelsOfMask, packCells } from '../geometry/cell-distance';
import { euclideanDistanceTransform } from '../geometry/distance-transform';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import type { VoxelBox } from '../geometry/voxel-box';
import { cachedArray, type CachedArray, type DistanceFieldCache } from './distance-field-cache';
import { kindCode, type LabelInventory } from './label-inventory';

/** The crop an assessment works on and what it needs to key its fields. */
export interface CropContext {
  /** Names the series and its label map; null: nothing is cached. */
  seriesKey: string | null;
  cache?: DistanceFieldCache;
  /** The crop's own grid (voxel (0, 0, 0) is the box's first voxel), LPS, millimetres. */
  geometry: VolumeGeometry;
  /** The crop on the series grid. */
  box: VoxelBox;
  /** Kind code (label-inventory.ts) of every crop voxel, i fastest. */
  kindCodes: Uint8Array;
  inventory: LabelInventory;
}

/** Which array of a kind. */
export type KindFieldVariant = 'cells' | 'inside';

const isFloat32 = (value: CachedArray): value is Float32Array => value instanceof Float32Array;
const isInt32 = (value: CachedArray): value is Int32Array => value instanceof Int32Array;

/** The cache key of a kind's field on the crop; null without a series key. */
export function kindFieldKey(
  context: CropContext,
  kind: StructureKind,
  variant: KindFieldVariant,
): string | null {
  if (context.seriesKey === null) return null;
  const labels = context.inventory.labelsOfKind.get(kind) ?? [];
  const { start, size } = context.box;
  return `${context.seriesKey}|${kind}:${labels.join(',')}|${variant}|${start.join(',')}+${size.join(',')}`;
}

/**
 * The kind's boundary voxels on the crop (a face neighbour of another kind, or on the crop's
 * edge), packed by brick for `segmentApproachToCells` on the crop's grid.
 */
export function boundaryCellsOnCrop(context: CropContext, kind: StructureKind): Int32Array {
  const code = kindCode(kind);
  return cachedArray(
    context.cache,
    kindFieldKey(context, kind, 'cells'),
    () => {
      const { dimensions } = context.geometry;
      const mask = maskOfCode(context.kindCodes, code, true);
      return packCells(boundaryVoxelsOfMask(mask, dimensions), dimensions);
    },
    isInt32,
  );
}

/**
 * On the kind's voxels, the distance to the nearest crop voxel centre of anything else (its
 * wall), mm; 0 on every other voxel.
 */
export function insideDistanceOfKind(context: CropContext, kind: StructureKind): Float32Array {
  const code = kindCode(kind);
  return cachedArray(
    context.cache,
    kindFieldKey(context, kind, 'inside'),
    () => {
      const mask = maskOfCode(context.kindCodes, code, false);
      return euclideanDistanceTransform(
        mask,
        context.geometry.dimensions,
        context.geometry.spacingMm,
      );
    },
    isFloat32,
  );
}

/** How many crop voxels each kind code holds (index = code). */
export function voxelsPerKindCode(kindCodes: Uint8Array): Float64Array {
  const counts = new Float64Array(256);
  for (let index = 0; index < kindCodes.length; index++) counts[kindCodes[index]]++;
  return counts;
}

/** 1 where the kind code is `code` (or, with `isMember` false, where it is not), else 0. */
export function maskOfCode(kindCodes: Uint8Array, code: number, isMember = true): Uint8Array {
  const mask = new Uint8Array(kindCodes.length);
  const inside = isMember ? 1 : 0;
  const outside = 1 - inside;
  for (let index = 0; index < kindCodes.length; index++) {
    mask[index] = kindCodes[index] === code ? inside : outside;
  }
  return mask;
}
