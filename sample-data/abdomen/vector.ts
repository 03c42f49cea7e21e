/** Three-component vectors in patient space (LPS, millimetres) and the little arithmetic on them. */

/** A point or direction, LPS: +x patient left, +y posterior, +z head; millimetres. */
export type Vec3 = [number, number, number];

/** The vector whose component on each axis (0 x, 1 y, 2 z) `component` gives. */
export function componentwise(component: (axis: 0 | 1 | 2) => number): Vec3 {
  return [component(0), component(1), component(2)];
}

export function add(a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 {
  return [a[0] + b[0], a[1] + b[1], a[2] + b[2]];
}

export function subtract(a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 {
  return [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
}

export function scale(a: Readonly<Vec3>, factor: number): Vec3 {
  return [a[0] * factor, a[1] * factor, a[2] * factor];
}

export function dot(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}

export function length(a: Readonly<Vec3>): number {
  return Math.sqrt(dot(a, a));
}

export function distance(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return length(subtract(a, b));
}

/** Distance from a point to the segment from `start` to `end`, all LPS millimetres. */
export function distanceToSegment(
  point: Readonly<Vec3>,
  start: Readonly<Vec3>,
  end: Readonly<Vec3>,
): number {
  const along = subtract(end, start);
  const lengthSquared = dot(along, along);
  const fraction =
    lengthSquared === 0
      ? 0
      : Math.min(1, Math.max(0, dot(subtract(point, start), along) / lengthSquared));
  return distance(point, add(start, scale(along, fraction)));
}
