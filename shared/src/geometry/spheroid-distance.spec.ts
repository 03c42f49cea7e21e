import { describe, expect, it } from 'vitest';
import { nearestOnEllipse, spheroidDistance } from './spheroid-distance';
import { addScaled, dot, normalize, type Vec3 } from './vector';

/** Park–Miller generator, so that the cases repeat. */
function random(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
}

/**
 * Reference by brute force: the smallest distance to 20 000 points of the ellipse
 * (a·cos θ, b·sin θ), refined by golden-section search around the best (the distance along the
 * parametrisation is smooth).
 */
function bruteForceDistance(a: number, b: number, y0: number, y1: number): number {
  const at = (theta: number) => Math.hypot(a * Math.cos(theta) - y0, b * Math.sin(theta) - y1);
  const count = 20_000;
  let best = 0;
  for (let n = 1; n < count; n++) {
    if (at((2 * Math.PI * n) / count) < at((2 * Math.PI * best) / count)) best = n;
  }
  let low = (2 * Math.PI * (best - 1)) / count;
  let high = (2 * Math.PI * (best + 1)) / count;
  for (let step = 0; step < 80; step++) {
    const m1 = low + (high - low) * 0.382;
    const m2 = low + (high - low) * 0.618;
    if (at(m1) < at(m2)) high = m2;
    else low = m1;
  }
  return at((low + high) / 2);
}

describe('nearestOnEllipse', () => {
  it.each([
    { a: 20, b: 12, label: 'prolate' },
    { a: 9, b: 15, label: 'oblate' },
  ])('agrees with a dense search of the $label ellipse inside and out', ({ a, b }) => {
    const next = random(11);
    for (let trial = 0; trial < 25; trial++) {
      const y0 = next() * 1.6 * a;
      const y1 = next() * 1.6 * b;
      const found = nearestOnEllipse(a, b, y0, y1);
      expect(found.distance).toBeCloseTo(bruteForceDistance(a, b, y0, y1), 7);
      // The nearest point lies on the ellipse.
      expect((found.x0 / a) ** 2 + (found.x1 / b) ** 2).toBeCloseTo(1, 9);
    }
  });

  it('handles points on the axes: the centre of a prolate ellipse is b from it', () => {
    // At the centre the nearest points are the ends of the minor axis (by hand).
    expect(nearestOnEllipse(20, 12, 0, 0).distance).toBeCloseTo(12, 12);
    // On the major axis inside, past the centre of curvature x = (a² − b²)/a = 12.8 mm: the
    // vertex is nearest; before it, an off-axis point (Eberly 2013, from memory).
    expect(nearestOnEllipse(20, 12, 15, 0).distance).toBeCloseTo(5, 12);
    expect(nearestOnEllipse(20, 12, 10, 0).distance).toBeCloseTo(
      bruteForceDistance(20, 12, 10, 0),
      7,
    );
    expect(nearestOnEllipse(20, 12, 10, 0).distance).toBeLessThan(10);
  });
});

describe('spheroidDistance', () => {
  const centre: Vec3 = [3, -4, 12];
  const axis = normalize([1, 2, -2]);

  it('is R − |p − c| for a sphere, positive inside and negative outside', () => {
    // A sphere is a spheroid with equal semi-axes; its normal is radial.
    const point = addScaled(centre, normalize([2, -1, 1]), 7);
    const inside = spheroidDistance(point, centre, axis, 10, 10);
    expect(inside.signedMm).toBeCloseTo(3, 12);
    expect(dot(inside.outwardNormal, normalize([2, -1, 1]))).toBeCloseTo(1, 12);
    const outside = spheroidDistance(addScaled(centre, [0, 0, 1], 16), centre, axis, 10, 10);
    expect(outside.signedMm).toBeCloseTo(-6, 12);
  });

  it('reads the meridian-plane distance of the ellipse, whatever the turn about the axis', () => {
    // Rotating the point about the axis leaves the distance unchanged (symmetry of revolution).
    const across = normalize([2, -1, 0]);
    const aside = normalize([
      axis[1] * across[2] - axis[2] * across[1],
      axis[2] * across[0] - axis[0] * across[2],
      axis[0] * across[1] - axis[1] * across[0],
    ]);
    const inPlane = addScaled(addScaled(centre, axis, 14), across, 9);
    const turned = addScaled(addScaled(centre, axis, 14), aside, 9);
    const expected = -bruteForceDistance(17, 11, 14, 9);
    expect(spheroidDistance(inPlane, centre, axis, 17, 11).signedMm).toBeCloseTo(expected, 7);
    expect(spheroidDistance(turned, centre, axis, 17, 11).signedMm).toBeCloseTo(expected, 7);
  });
});
