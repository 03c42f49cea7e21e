/**
 * A cache of the arrays the assessment derives from a label map — distance fields of each
 * structure kind on a crop, boundary voxels of a kind — so that repeated assessments of one
 * series (a plan dragged in the viewer, the plans of one case) reuse them. Injected by the
 * caller, who decides how long it lives; the engine never holds one of its own.
 */

/** What the cache holds: distance fields (mm) and lists of voxel indices. */
export type CachedArray = Float32Array | Int32Array;

/** Anything with these two methods will do, e.g. a Map. */
export interface DistanceFieldCache {
  get(key: string): CachedArray | undefined;
  set(key: string, value: CachedArray): void;
}

/** Default capacity of `createDistanceFieldCache`: a plan's kinds on a few crops. */
export const DEFAULT_CACHE_ENTRIES = 64;

/**
 * A cache that keeps the `maxEntries` most recently used arrays and forgets the oldest. Its
 * arrays are shared with every caller: the engine only reads them.
 */
export function createDistanceFieldCache(maxEntries = DEFAULT_CACHE_ENTRIES): DistanceFieldCache {
  if (!(Number.isInteger(maxEntries) && maxEntries >= 1)) {
    throw new RangeError(`maxEntries must be a positive whole number, got ${maxEntries}`);
  }
  const entries = new Map<string, CachedArray>();
  return {
    get(key) {
      const value = entries.get(key);
      if (value !== undefined) {
        entries.delete(key);
        entries.set(key, value);
      }
      return value;
    },
    set(key, value) {
      entries.delete(key);
      entries.set(key, value);
      while (entries.size > maxEntries) {
        const oldest = entries.keys().next();
        if (oldest.done) break;
        entries.delete(oldest.value);
      }
    },
  };
}

/**
 * The array under `key` in the cache, computed by `compute` and stored when missing. Without a
 * cache or a key it is simply computed.
 */
export function cachedArray<T extends CachedArray>(
  cache: DistanceFieldCache | undefined,
  key: string | null,
  compute: () => T,
  isExpected: (value: CachedArray) => value is T,
): T {
  if (cache === undefined || key === null) return compute();
  const cached = cache.get(key);
  if (cached !== undefined && isExpected(cached)) return cached;
  const value = compute();
  cache.set(key, value);
  return value;
}

/**
 * The cache one run uses: every array it derives is kept for the rest of the run (so that
 * stages share them), and read from and written to `external` as well when given.
 */
export function runCache(external?: DistanceFieldCache): DistanceFieldCache {
  const own = new Map<string, CachedArray>();
  return {
    get(key) {
      const value = own.get(key) ?? external?.get(key);
      if (value !== undefined) own.set(key, value);
      return value;
    },
    set(key, value) {
      own.set(key, value);
      external?.set(key, value);
    },
  };
}
