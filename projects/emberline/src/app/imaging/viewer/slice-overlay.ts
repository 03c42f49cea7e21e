/**
 * What a slice view draws over the image, in screen coordinates (CSS pixels): the crosshair
 * lines where the other views' planes cut this one, applicator paths, their handles and the
 * distance measurement. Pure: computed from the viewport maths, drawn as SVG.
 */
import { vector3, type Vec3 } from '@emberline/shared';
import type { SliceAxes } from './slice-axes';
import { lpsToScreen, type ScreenPoint, type SliceViewport } from './slice-viewport';

export interface ScreenSegment {
  x1: number;
  y1: number;
  x2: number;
  y2: number;
}

/** The shown plane: a point on it and half the slice spacing (what counts as "on" it). */
export interface ShownPlane {
  pointLps: Vec3;
  halfThicknessMm: number;
}

/**
 * The line where another plane (normal `otherNormalLps`, through `otherPointLps`) cuts the
 * shown one, clipped to the view; null when the planes are parallel or the line misses it.
 */
export function planeCutLine(
  axes: SliceAxes,
  viewport: SliceViewport,
  plane: ShownPlane,
  otherNormalLps: Readonly<Vec3>,
  otherPointLps: Readonly<Vec3>,
): ScreenSegment | null {
  const direction = vector3.cross(axes.normalLps, otherNormalLps);
  const lengthSquared = vector3.dot(direction, direction);
  if (lengthSquared < 1e-12) return null;
  // Move from the other plane's point, within the other plane, onto the shown plane.
  const withinOther = vector3.cross(direction, otherNormalLps);
  const step =
    vector3.dot(axes.normalLps, vector3.subtract(plane.pointLps, otherPointLps)) /
    vector3.dot(axes.normalLps, withinOther);
  const onBoth = vector3.addScaled(otherPointLps, withinOther, step);
  const start = lpsToScreen(axes, viewport, plane.pointLps, onBoth);
  const towards = lpsToScreen(
    axes,
    viewport,
    plane.pointLps,
    vector3.addScaled(onBoth, direction, 1 / Math.sqrt(lengthSquared)),
  );
  return clipInfiniteLine(start, towards, viewport.widthPx, viewport.heightPx);
}

/** The infinite line through two screen points clipped to [0, width] × [0, height]. */
export function clipInfiniteLine(
  a: { x: number; y: number },
  b: { x: number; y: number },
  widthPx: number,
  heightPx: number,
): ScreenSegment | null {
  const dx = b.x - a.x;
  const dy = b.y - a.y;
  let low = -Infinity;
  let high = Infinity;
  const clip = (origin: number, delta: number, max: number): boolean => {
    if (Math.abs(delta) < 1e-12) return origin >= 0 && origin <= max;
    const t1 = (0 - origin) / delta;
    const t2 = (max - origin) / delta;
    low = Math.max(low, Math.min(t1, t2));
    high = Math.min(high, Math.max(t1, t2));
    return true;
  };
  if (!clip(a.x, dx, widthPx) || !clip(a.y, dy, heightPx) || low > high) return null;
  return { x1: a.x + low * dx, y1: a.y + low * dy, x2: a.x + high * dx, y2: a.y + high * dy };
}

/** An applicator path as one slice view shows it. */
export interface PathOverlay {
  /** The whole path projected onto the plane (drawn faint, dashed). */
  projection: ScreenSegment;
  /** The part lying within half a slice of the plane (drawn solid), if any. */
  inSlab: ScreenSegment | null;
  /** Where the path pierces the plane, if it does between entry and target. */
  crossing: { x: number; y: number } | null;
  target: ScreenPoint & { isOnPlane: boolean };
  entry: ScreenPoint & { isOnPlane: boolean };
}

/** The overlay of the path from entry to target (LPS, millimetres) on a slice view. */
export function pathOverlay(
  axes: SliceAxes,
  viewport: SliceViewport,
  plane: ShownPlane,
  entryLps: Readonly<Vec3>,
  targetLps: Readonly<Vec3>,
): PathOverlay {
  const entry = lpsToScreen(axes, viewport, plane.pointLps, entryLps);
  const target = lpsToScreen(axes, viewport, plane.pointLps, targetLps);
  const at = (t: number) => ({
    x: entry.x + t * (target.x - entry.x),
    y: entry.y + t * (target.y - entry.y),
  });
  // Depth is linear along the path: solve |depth(t)| ≤ half thickness for t in [0, 1].
  const half = plane.halfThicknessMm;
  const delta = target.depthMm - entry.depthMm;
  let low = 0;
  let high = 1;
  if (Math.abs(delta) < 1e-9) {
    if (Math.abs(entry.depthMm) > half) high = -1;
  } else {
    const t1 = (-half - entry.depthMm) / delta;
    const t2 = (half - entry.depthMm) / delta;
    low = Math.max(0, Math.min(t1, t2));
    high = Math.min(1, Math.max(t1, t2));
  }
  const inSlab = low <= high ? segment(at(low), at(high)) : null;
  const zeroAt = Math.abs(delta) < 1e-9 ? null : -entry.depthMm / delta;
  const crossing = zeroAt !== null && zeroAt >= 0 && zeroAt <= 1 ? at(zeroAt) : null;
  return {
    projection: segment(entry, target),
    inSlab,
    crossing,
    entry: { ...entry, isOnPlane: Math.abs(entry.depthMm) <= half },
    target: { ...target, isOnPlane: Math.abs(target.depthMm) <= half },
  };
}

function segment(a: { x: number; y: number }, b: { x: number; y: number }): ScreenSegment {
  return { x1: a.x, y1: a.y, x2: b.x, y2: b.y };
}

/** The nearest of the candidates within `radiusPx` of (x, y), or null. */
export function nearestWithin<T extends { x: number; y: number }>(
  candidates: readonly T[],
  x: number,
  y: number,
  radiusPx: number,
): T | null {
  let best: T | null = null;
  let bestDistance = radiusPx;
  for (const candidate of candidates) {
    const distance = Math.hypot(candidate.x - x, candidate.y - y);
    if (distance <= bestDistance) {
      best = candidate;
      bestDistance = distance;
    }
  }
  return best;
}
