/**
 * Three-component vectors as plain tuples, so that they cross the wire and worker boundaries
 * untouched. The frame is whatever the caller's is: LPS millimetres for patient positions,
 * continuous voxel indices (i, j, k) for grid positions.
 */

/** A vector or point with three components, in the caller's frame and unit. */
export type Vec3 = [number, number, number];

/** Component-wise sum a + b, same frame and unit as the inputs. */
export function add(a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 {
  return [a[0] + b[0], a[1] + b[1], a[2] + b[2]];
}

/** Component-wise difference a − b, same frame and unit as the inputs. */
export function subtract(a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 {
  return [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
}

/** The vector a scaled by a number without unit. */
export function scale(a: Readonly<Vec3>, factor: number): Vec3 {
  return [a[0] * factor, a[1] * factor, a[2] * factor];
}

/** a + factor · b: a point moved along a direction, same frame as the inputs. */
export function addScaled(a: Readonly<Vec3>, b: Readonly<Vec3>, factor: number): Vec3 {
  return [a[0] + b[0] * factor, a[1] + b[1] * factor, a[2] + b[2] * factor];
}

/** Dot product a · b (the product of the inputs' units). */
export function dot(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}

/** Cross product a × b, right-handed in the inputs' frame. */
export function cross(a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 {
  return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
}

/** Euclidean length |a|, in the inputs' unit. */
export function norm(a: Readonly<Vec3>): number {
  return Math.hypot(a[0], a[1], a[2]);
}

/** Euclidean distance |a − b| between two points, in the inputs' unit. */
export function distance(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return Math.hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2]);
}

/** a scaled to unit length. Throws a RangeError for a zero or non-finite vector. */
export function normalize(a: Readonly<Vec3>): Vec3 {
  const length = norm(a);
  if (!(length > 0) || !Number.isFinite(length)) {
    throw new RangeError(`cannot normalise the vector (${a.join(', ')})`);
  }
  return scale(a, 1 / length);
}
