/**
 * Exact distance from a point to the surface of a spheroid (an ellipsoid of revolution), inside
 * or out, and the outward normal there. In the plane through the axis and the point the
 * question is the distance from a point to an ellipse, answered by the robust bisection of
 * Eberly (D. Eberly, "Distance from a Point to an Ellipse, an Ellipsoid, or a Hyperellipsoid",
 * Geometric Tools, 2013 — from memory): the nearest point x of the ellipse (x₀/e₀)² + (x₁/e₁)²
 * = 1 to y satisfies y − x = t·∇, i.e. xᵢ = eᵢ²yᵢ / (t + eᵢ²), and t is the one root of
 * Σ (eᵢyᵢ / (t + eᵢ²))² = 1 with t > −e₁² (e₀ ≥ e₁), which bisection brackets.
 */
import { dot, type Vec3 } from './vector';

/** Distance from a point to a spheroid's surface. */
export interface SpheroidDistance {
  /** Distance to the surface, mm: positive inside, negative outside. */
  signedMm: number;
  /** Unit outward normal of the surface at the nearest point, LPS. */
  outwardNormal: Vec3;
}

/**
 * Signed distance (positive inside) from `point` to the spheroid about `centre` with unit axis
 * `axis`, semi-axis `semiAlongMm` along it and `semiAcrossMm` across, and the outward normal at
 * the nearest surface point. LPS, millimetres.
 */
export function spheroidDistance(
  point: Readonly<Vec3>,
  centre: Readonly<Vec3>,
  axis: Readonly<Vec3>,
  semiAlongMm: number,
  semiAcrossMm: number,
): SpheroidDistance {
  const ox = point[0] - centre[0];
  const oy = point[1] - centre[1];
  const oz = point[2] - centre[2];
  const along = ox * axis[0] + oy * axis[1] + oz * axis[2];
  const ax = ox - along * axis[0];
  const ay = oy - along * axis[1];
  const az = oz - along * axis[2];
  const across = Math.hypot(ax, ay, az);
  const nearest = nearestOnEllipse(semiAlongMm, semiAcrossMm, Math.abs(along), across);
  const isInside = (along / semiAlongMm) ** 2 + (across / semiAcrossMm) ** 2 <= 1;
  // Outward normal of the ellipse at the nearest point, ∝ (x₀/a², x₁/b²), back in 3-D.
  const normalAlong = (along < 0 ? -1 : 1) * (nearest.x0 / semiAlongMm ** 2);
  const normalAcross = nearest.x1 / semiAcrossMm ** 2;
  const radial: Vec3 = across > 0 ? [ax / across, ay / across, az / across] : perpendicularTo(axis);
  const nx = normalAlong * axis[0] + normalAcross * radial[0];
  const ny = normalAlong * axis[1] + normalAcross * radial[1];
  const nz = normalAlong * axis[2] + normalAcross * radial[2];
  const length = Math.hypot(nx, ny, nz);
  return {
    signedMm: isInside ? nearest.distance : -nearest.distance,
    outwardNormal:
      length > 0 ? [nx / length, ny / length, nz / length] : [axis[0], axis[1], axis[2]],
  };
}

/** Some unit vector perpendicular to a unit `axis`. */
function perpendicularTo(axis: Readonly<Vec3>): Vec3 {
  const helper: Vec3 = Math.abs(axis[0]) < 0.9 ? [1, 0, 0] : [0, 1, 0];
  const along = dot(helper, axis);
  const vector: Vec3 = [
    helper[0] - along * axis[0],
    helper[1] - along * axis[1],
    helper[2] - along * axis[2],
  ];
  const length = Math.hypot(vector[0], vector[1], vector[2]);
  return vector.map((value) => value / length) as Vec3;
}

/**
 * Nearest point (x0 along, x1 across, both ≥ 0) of the ellipse with semi-axes `a` (along) and
 * `b` (across) to the point (y0, y1), y0, y1 ≥ 0, and the distance to it.
 */
export function nearestOnEllipse(
  a: number,
  b: number,
  y0: number,
  y1: number,
): { x0: number; x1: number; distance: number } {
  if (a >= b) return nearestOrdered(a, b, y0, y1);
  const swapped = nearestOrdered(b, a, y1, y0);
  return { x0: swapped.x1, x1: swapped.x0, distance: swapped.distance };
}

/** Eberly's algorithm for e0 ≥ e1 > 0 and y0, y1 ≥ 0. */
function nearestOrdered(
  e0: number,
  e1: number,
  y0: number,
  y1: number,
): { x0: number; x1: number; distance: number } {
  if (y1 > 0) {
    if (y0 > 0) {
      const z0 = y0 / e0;
      const z1 = y1 / e1;
      const g = z0 * z0 + z1 * z1 - 1;
      if (g === 0) return { x0: y0, x1: y1, distance: 0 };
      const r0 = (e0 / e1) ** 2;
      const s = rootOf(r0, z0, z1, g);
      const x0 = (r0 * y0) / (s + r0);
      const x1 = y1 / (s + 1);
      return { x0, x1, distance: Math.hypot(x0 - y0, x1 - y1) };
    }
    return { x0: 0, x1: e1, distance: Math.abs(y1 - e1) };
  }
  const numerator = e0 * y0;
  const denominator = e0 * e0 - e1 * e1;
  if (numerator < denominator) {
    const ratio = numerator / denominator;
    const x0 = e0 * ratio;
    const x1 = e1 * Math.sqrt(1 - ratio * ratio);
    return { x0, x1, distance: Math.hypot(x0 - y0, x1) };
  }
  return { x0: e0, x1: 0, distance: Math.abs(y0 - e0) };
}

/** The root s of (r0·z0 / (s + r0))² + (z1 / (s + 1))² = 1 by bisection (t = s·e1²). */
function rootOf(r0: number, z0: number, z1: number, g: number): number {
  const n0 = r0 * z0;
  let s0 = z1 - 1;
  let s1 = g < 0 ? 0 : Math.hypot(n0, z1) - 1;
  let s = 0;
  for (let iteration = 0; iteration < 2000; iteration++) {
    s = (s0 + s1) / 2;
    if (s === s0 || s === s1) break;
    const ratio0 = n0 / (s + r0);
    const ratio1 = z1 / (s + 1);
    const value = ratio0 * ratio0 + ratio1 * ratio1 - 1;
    if (value > 0) s0 = s;
    else if (value < 0) s1 = s;
    else break;
  }
  return s;
}
