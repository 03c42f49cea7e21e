/**
 * Distance fields of each structure kind on the assessment's crop, exact (Felzenszwalb &
 * Huttenlocher 2012, anisotropic; geometry/distance-transform.ts) and kept in the injected
 * cache under series + kind (with its label values) + crop. Distances are millimetres between
 * voxel centres; the voxels beyond the crop are not seen (see `euclideanDistanceTransform`'s
 * note on boxes: a value d is exact when the crop reaches d beyond the voxel).
 */
import type { StructureKind } from '../api/structures';
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

/** Which field of a kind. */
export type KindFieldVariant = 'outside' | 'inside';

const isFloat32 = (value: CachedArray): value is Float32Array => value instanceof Float32Array;

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
 * Distance from each crop voxel centre to the nearest crop voxel centre of the kind, mm: 0 on
 * the kind's voxels, Infinity everywhere when the crop holds none.
 */
export function outsideDistanceOfKind(context: CropContext, kind: StructureKind): Float32Array {
  const code = kindCode(kind);
  return cachedArray(
    context.cache,
    kindFieldKey(context, kind, 'outside'),
    () => {
      const mask = maskOfCode(context.kindCodes, code, true);
      return euclideanDistanceTransform(
        mask,
        context.geometry.dimensions,
        context.geometry.spacingMm,
      );
    },
    isFloat32,
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
