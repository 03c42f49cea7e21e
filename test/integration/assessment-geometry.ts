/**
 * Textbook geometry the assessment tests compute their expected values with, written here and
 * not taken from the engine.
 */
import type { Vec3 } from '@emberline/shared';

const subtract = (a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 => [
  a[0] - b[0],
  a[1] - b[1],
  a[2] - b[2],
];
const dot = (a: Readonly<Vec3>, b: Readonly<Vec3>) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
const clamp01 = (value: number) => Math.min(1, Math.max(0, value));

/**
 * Smallest distance between segments p1–q1 and p2–q2, mm: the closest-points computation of
 * Ericson, Real-Time Collision Detection (2005) §5.1.9, degenerate segments included.
 */
export function closestDistanceBetweenSegments(
  p1: Readonly<Vec3>,
  q1: Readonly<Vec3>,
  p2: Readonly<Vec3>,
  q2: Readonly<Vec3>,
): number {
  const d1 = subtract(q1, p1);
  const d2 = subtract(q2, p2);
  const r = subtract(p1, p2);
  const a = dot(d1, d1);
  const e = dot(d2, d2);
  const f = dot(d2, r);
  let s: number;
  let t: number;
  const epsilon = 1e-12;
  if (a <= epsilon && e <= epsilon) {
    s = 0;
    t = 0;
  } else if (a <= epsilon) {
    s = 0;
    t = clamp01(f / e);
  } else {
    const c = dot(d1, r);
    if (e <= epsilon) {
      t = 0;
      s = clamp01(-c / a);
    } else {
      const b = dot(d1, d2);
      const denominator = a * e - b * b;
      s = denominator > epsilon ? clamp01((b * f - c * e) / denominator) : 0;
      t = (b * s + f) / e;
      if (t < 0) {
        t = 0;
        s = clamp01(-c / a);
      } else if (t > 1) {
        t = 1;
        s = clamp01((b - c) / a);
      }
    }
  }
  const closest1: Vec3 = [p1[0] + d1[0] * s, p1[1] + d1[1] * s, p1[2] + d1[2] * s];
  const closest2: Vec3 = [p2[0] + d2[0] * t, p2[1] + d2[1] * t, p2[2] + d2[2] * t];
  return Math.hypot(...subtract(closest1, closest2));
}

/**
 * Voxel centres (LPS, mm) of an axis-aligned grid that lie inside a sphere — how the sample
 * generator paints a sphere ("a voxel belongs to a shape when its centre does").
 */
export function voxelCentresInSphere(
  grid: { dimensions: [number, number, number]; spacingMm: Vec3; originLps: Vec3 },
  centre: Readonly<Vec3>,
  radiusMm: number,
): Vec3[] {
  const found: Vec3[] = [];
  const range = (axis: 0 | 1 | 2) => {
    const low = Math.floor((centre[axis] - radiusMm - grid.originLps[axis]) / grid.spacingMm[axis]);
    const high = Math.ceil(
      (centre[axis] - radiusMm - grid.originLps[axis] + 2 * radiusMm) / grid.spacingMm[axis],
    );
    return [Math.max(0, low), Math.min(grid.dimensions[axis] - 1, high)] as const;
  };
  const [i0, i1] = range(0);
  const [j0, j1] = range(1);
  const [k0, k1] = range(2);
  for (let k = k0; k <= k1; k++) {
    for (let j = j0; j <= j1; j++) {
      for (let i = i0; i <= i1; i++) {
        const point: Vec3 = [
          grid.originLps[0] + i * grid.spacingMm[0],
          grid.originLps[1] + j * grid.spacingMm[1],
          grid.originLps[2] + k * grid.spacingMm[2],
        ];
        // Σ ((p − c) / r)² ≤ 1, the ellipsoid test with equal semi-axes: on the boundary (a
        // spacing multiple of r) a distance test and this one round differently.
        const [dx, dy, dz] = subtract(point, centre).map((value) => value / radiusMm);
        if (dx ** 2 + dy ** 2 + dz ** 2 <= 1) found.push(point);
      }
    }
  }
  return found;
}
