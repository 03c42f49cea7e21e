/**
 * Analytic solids in patient space (LPS, millimetres): a membership test and a bounding box
 * each, composed by union, intersection and difference. A voxel belongs to a solid when its
 * centre does.
 */
import { componentwise, distanceToSegment, type Vec3 } from './vector';

/** An axis-aligned box, LPS, millimetres. */
export interface BoundsMm {
  min: Vec3;
  max: Vec3;
}

export interface Solid {
  /** A box holding every point of the solid. */
  readonly boundsMm: BoundsMm;
  /** Whether the point (LPS, millimetres) lies inside. */
  contains(x: number, y: number, z: number): boolean;
}

/** The shapes whose volume has a closed form, as written to the manifest. */
export type AnalyticShape =
  | { type: 'sphere'; centreLps: Vec3; radiusMm: number }
  | { type: 'ellipsoid'; centreLps: Vec3; semiAxesMm: Vec3 };

/** Volume of an analytic shape, millilitres: 4/3·π·r³ or 4/3·π·abc. */
export function analyticVolumeMl(shape: AnalyticShape): number {
  const [a, b, c] =
    shape.type === 'sphere' ? [shape.radiusMm, shape.radiusMm, shape.radiusMm] : shape.semiAxesMm;
  return ((4 / 3) * Math.PI * a * b * c) / 1000;
}

/** The solid of an analytic shape. */
export function solidOf(shape: AnalyticShape): Solid {
  return shape.type === 'sphere'
    ? ellipsoid(shape.centreLps, [shape.radiusMm, shape.radiusMm, shape.radiusMm])
    : ellipsoid(shape.centreLps, shape.semiAxesMm);
}

/** An ellipsoid with axes along x, y and z: Σ ((p − c) / semi-axis)² ≤ 1. */
export function ellipsoid(centreLps: Readonly<Vec3>, semiAxesMm: Readonly<Vec3>): Solid {
  const [cx, cy, cz] = centreLps;
  const [a, b, c] = semiAxesMm;
  return {
    boundsMm: { min: [cx - a, cy - b, cz - c], max: [cx + a, cy + b, cz + c] },
    contains: (x, y, z) => ((x - cx) / a) ** 2 + ((y - cy) / b) ** 2 + ((z - cz) / c) ** 2 <= 1,
  };
}

/** A cylinder along z with an elliptic cross-section, from `lowZMm` to `highZMm`. */
export function ellipticCylinder(
  centreXMm: number,
  centreYMm: number,
  semiAxisXMm: number,
  semiAxisYMm: number,
  lowZMm: number,
  highZMm: number,
): Solid {
  return {
    boundsMm: {
      min: [centreXMm - semiAxisXMm, centreYMm - semiAxisYMm, lowZMm],
      max: [centreXMm + semiAxisXMm, centreYMm + semiAxisYMm, highZMm],
    },
    contains: (x, y, z) =>
      z >= lowZMm &&
      z <= highZMm &&
      ((x - centreXMm) / semiAxisXMm) ** 2 + ((y - centreYMm) / semiAxisYMm) ** 2 <= 1,
  };
}

/** Points within `radiusMm` of the segment from `start` to `end`: a tube with round ends. */
export function capsule(start: Readonly<Vec3>, end: Readonly<Vec3>, radiusMm: number): Solid {
  const point: Vec3 = [0, 0, 0];
  return {
    boundsMm: {
      min: componentwise((axis) => Math.min(start[axis], end[axis]) - radiusMm),
      max: componentwise((axis) => Math.max(start[axis], end[axis]) + radiusMm),
    },
    contains: (x, y, z) => {
      point[0] = x;
      point[1] = y;
      point[2] = z;
      return distanceToSegment(point, start, end) <= radiusMm;
    },
  };
}

/**
 * A tube of one radius along a polyline, as one capsule a segment: painted piece by piece, each
 * within its own small box rather than the box of the whole tube.
 */
export function tubePieces(centreLineLps: readonly Vec3[], radiusMm: number): Solid[] {
  return centreLineLps.slice(1).map((end, index) => capsule(centreLineLps[index], end, radiusMm));
}

/** Points that a predicate accepts, within a given box. */
export function region(
  boundsMm: BoundsMm,
  predicate: (x: number, y: number, z: number) => boolean,
): Solid {
  return { boundsMm, contains: predicate };
}

export function union(...solids: Solid[]): Solid {
  return {
    boundsMm: {
      min: componentwise((axis) => Math.min(...solids.map((solid) => solid.boundsMm.min[axis]))),
      max: componentwise((axis) => Math.max(...solids.map((solid) => solid.boundsMm.max[axis]))),
    },
    contains: (x, y, z) => solids.some((solid) => solid.contains(x, y, z)),
  };
}

export function intersection(...solids: Solid[]): Solid {
  return {
    boundsMm: {
      min: componentwise((axis) => Math.max(...solids.map((solid) => solid.boundsMm.min[axis]))),
      max: componentwise((axis) => Math.min(...solids.map((solid) => solid.boundsMm.max[axis]))),
    },
    contains: (x, y, z) => solids.every((solid) => solid.contains(x, y, z)),
  };
}

/** Points of `solid` outside `removed`. */
export function difference(solid: Solid, removed: Solid): Solid {
  return {
    boundsMm: solid.boundsMm,
    contains: (x, y, z) => solid.contains(x, y, z) && !removed.contains(x, y, z),
  };
}
