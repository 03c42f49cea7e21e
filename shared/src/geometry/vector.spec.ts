import { describe, expect, it } from 'vitest';
import { add, addScaled, cross, distance, dot, norm, normalize, scale, subtract } from './vector';
import type { Vec3 } from './vector';

describe('cross product, right-handed (common practice: x × y = z, y × z = x, z × x = y)', () => {
  it.each([
    { a: [1, 0, 0], b: [0, 1, 0], product: [0, 0, 1] },
    { a: [0, 1, 0], b: [0, 0, 1], product: [1, 0, 0] },
    { a: [0, 0, 1], b: [1, 0, 0], product: [0, 1, 0] },
    { a: [0, 1, 0], b: [1, 0, 0], product: [0, 0, -1] },
    { a: [2, 3, 4], b: [5, 6, 7], product: [-3, 6, -3] },
  ] as { a: Vec3; b: Vec3; product: Vec3 }[])('gives $a × $b = $product', ({ a, b, product }) => {
    expect(cross(a, b)).toEqual(product);
  });

  it('is perpendicular to both factors (common practice)', () => {
    const a: Vec3 = [0.3, -1.7, 2.2];
    const b: Vec3 = [4.1, 0.5, -0.9];
    expect(dot(cross(a, b), a)).toBeCloseTo(0, 12);
    expect(dot(cross(a, b), b)).toBeCloseTo(0, 12);
  });
});

describe('lengths (Pythagorean triples, common practice)', () => {
  it.each([
    { vector: [3, 4, 0], length: 5 },
    { vector: [2, 3, 6], length: 7 },
    { vector: [-1, -4, 8], length: 9 },
  ] as { vector: Vec3; length: number }[])('gives |$vector| = $length', ({ vector, length }) => {
    expect(norm(vector)).toBe(length);
    expect(distance(vector, [0, 0, 0])).toBe(length);
  });

  it('scales to unit length', () => {
    expect(normalize([2, 3, 6])).toEqual([2 / 7, 3 / 7, 6 / 7]);
  });

  it.each([
    { name: 'a zero vector', vector: [0, 0, 0] },
    { name: 'a vector with NaN', vector: [1, Number.NaN, 0] },
    { name: 'an infinite vector', vector: [Infinity, 0, 0] },
  ] as { name: string; vector: Vec3 }[])('refuses to normalise $name', ({ vector }) => {
    expect(() => normalize(vector)).toThrow(RangeError);
  });
});

describe('arithmetic', () => {
  it('adds, subtracts, scales and moves along a direction', () => {
    expect(add([1, 2, 3], [10, 20, 30])).toEqual([11, 22, 33]);
    expect(subtract([1, 2, 3], [10, 20, 30])).toEqual([-9, -18, -27]);
    expect(scale([1, -2, 3], -2)).toEqual([-2, 4, -6]);
    expect(addScaled([1, 2, 3], [1, 0, -1], 2.5)).toEqual([3.5, 2, 0.5]);
    expect(dot([1, 2, 3], [4, -5, 6])).toBe(12);
  });
});
