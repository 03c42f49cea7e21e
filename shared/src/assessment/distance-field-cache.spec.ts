import { describe, expect, it } from 'vitest';
import { cachedArray, createDistanceFieldCache, runCache } from './distance-field-cache';

const isFloat32 = (value: unknown): value is Float32Array => value instanceof Float32Array;

describe('createDistanceFieldCache', () => {
  it('forgets the least recently used entry beyond its capacity (LRU, common practice)', () => {
    const cache = createDistanceFieldCache(2);
    cache.set('a', new Float32Array(1));
    cache.set('b', new Float32Array(1));
    cache.get('a');
    cache.set('c', new Float32Array(1));
    expect(cache.get('a')).toBeDefined();
    expect(cache.get('b')).toBeUndefined();
    expect(cache.get('c')).toBeDefined();
  });

  it('refuses a capacity that is not a positive whole number', () => {
    expect(() => createDistanceFieldCache(0)).toThrow(RangeError);
  });
});

describe('cachedArray and runCache', () => {
  it('computes once per key and hands the stored array back', () => {
    const cache = createDistanceFieldCache();
    let computed = 0;
    const compute = () => {
      computed++;
      return new Float32Array([computed]);
    };
    const first = cachedArray(cache, 'k', compute, isFloat32);
    const second = cachedArray(cache, 'k', compute, isFloat32);
    expect(second).toBe(first);
    expect(computed).toBe(1);
    cachedArray(cache, null, compute, isFloat32);
    expect(computed).toBe(2);
  });

  it('keeps a run’s arrays to itself and shares them with the external cache', () => {
    const external = createDistanceFieldCache();
    const run = runCache(external);
    const value = new Float32Array(3);
    run.set('k', value);
    expect(external.get('k')).toBe(value);
    const later = runCache(external);
    expect(later.get('k')).toBe(value);
    const alone = runCache();
    alone.set('k', value);
    expect(alone.get('k')).toBe(value);
    expect(runCache().get('k')).toBeUndefined();
  });
});
