/**
 * Which annotations a slice view shows, and where (pure). An annotation's points are patient
 * LPS millimetres, so the same point lands on the same anatomy in every view; a slice view
 * shows a point when it lies within half a slice thickness of the shown plane (the slab the
 * slice's voxels stand for), a line projected onto the plane when both its ends lie in that
 * slab, and otherwise, if the line passes through the plane between its ends, the point where
 * it does.
 */
import { vector3, type AnnotationKind, type AnnotationView, type Vec3 } from '@emberline/shared';
import type { SliceAxes } from '../slice-axes';
import type { ScreenSegment, ShownPlane } from '../slice-overlay';
import { lpsToScreen, type SliceViewport } from '../slice-viewport';

/**
 * Floating-point slack on "within half a slice", mm: a point placed by a click on a slice sits
 * on its plane up to rounding, and one on the boundary between two slices shows on both.
 */
const onPlaneToleranceMm = 1e-6;

/** Longest note text drawn beside its marker; the list under the views shows it whole. */
export const maximumLabelCharacters = 40;

/** Signed distance of a point from the shown plane along the view's normal, mm. */
export function depthFromPlane(
  pointLps: Readonly<Vec3>,
  plane: ShownPlane,
  normalLps: Readonly<Vec3>,
): number {
  return vector3.dot(vector3.subtract(pointLps, plane.pointLps), normalLps);
}

/** Whether a point lies within half a slice thickness of the shown plane. */
export function isNearPlane(
  pointLps: Readonly<Vec3>,
  plane: ShownPlane,
  normalLps: Readonly<Vec3>,
): boolean {
  return (
    Math.abs(depthFromPlane(pointLps, plane, normalLps)) <=
    plane.halfThicknessMm + onPlaneToleranceMm
  );
}

/** How a line (two LPS points) meets a slice: in the slab, through the plane, or not at all. */
export type LineOnSlice =
  { kind: 'in-slab' } | { kind: 'crossing'; pointLps: Vec3 } | { kind: 'apart' };

export function lineOnSlice(
  aLps: Readonly<Vec3>,
  bLps: Readonly<Vec3>,
  plane: ShownPlane,
  normalLps: Readonly<Vec3>,
): LineOnSlice {
  if (isNearPlane(aLps, plane, normalLps) && isNearPlane(bLps, plane, normalLps)) {
    return { kind: 'in-slab' };
  }
  const depthA = depthFromPlane(aLps, plane, normalLps);
  const depthB = depthFromPlane(bLps, plane, normalLps);
  // Depth changes linearly along the segment: it meets the plane where depth(t) = 0, t in [0, 1].
  if (depthA * depthB > 0 || depthA === depthB) return { kind: 'apart' };
  const t = depthA / (depthA - depthB);
  return { kind: 'crossing', pointLps: vector3.addScaled(aLps, vector3.subtract(bLps, aLps), t) };
}

/** A marker on screen, CSS pixels. */
export interface MarkerPoint {
  x: number;
  y: number;
}

/** One annotation as a slice view draws it. */
export interface SliceAnnotation {
  id: string;
  kind: AnnotationKind;
  /** Its points that lie in the slab (a line's ends, a point, a note's anchor). */
  markers: MarkerPoint[];
  /** A line whose ends both lie in the slab, projected onto the plane. */
  segment: ScreenSegment | null;
  /** Where a line passes through the plane when its ends do not both lie in the slab. */
  crossing: MarkerPoint | null;
  /** The text beside the first marker (or the crossing), shortened; null without text. */
  label: { text: string; x: number; y: number } | null;
}

/** What an annotation needs for drawing: the view's fields or a draft still being placed. */
export type DrawableAnnotation = Pick<AnnotationView, 'id' | 'kind' | 'points' | 'text'>;

/**
 * The annotations a slice view shows, in screen coordinates; those with nothing near the plane
 * are left out.
 */
export function annotationsOnSlice(
  annotations: readonly DrawableAnnotation[],
  axes: SliceAxes,
  viewport: SliceViewport,
  plane: ShownPlane,
): SliceAnnotation[] {
  const toScreen = (point: Readonly<Vec3>): MarkerPoint => {
    const { x, y } = lpsToScreen(axes, viewport, plane.pointLps, point);
    return { x, y };
  };
  const drawn: SliceAnnotation[] = [];
  for (const annotation of annotations) {
    const near = annotation.points.filter((point) => isNearPlane(point, plane, axes.normalLps));
    const markers = near.map(toScreen);
    let segment: ScreenSegment | null = null;
    let crossing: MarkerPoint | null = null;
    if (annotation.kind === 'line' && annotation.points.length === 2) {
      const [a, b] = annotation.points;
      const meeting = lineOnSlice(a, b, plane, axes.normalLps);
      if (meeting.kind === 'in-slab') {
        const [from, to] = [toScreen(a), toScreen(b)];
        segment = { x1: from.x, y1: from.y, x2: to.x, y2: to.y };
      } else if (meeting.kind === 'crossing') {
        crossing = toScreen(meeting.pointLps);
      }
    }
    if (!markers.length && !segment && !crossing) continue;
    const anchor = markers[0] ?? crossing;
    const text = annotation.text?.trim();
    drawn.push({
      id: annotation.id,
      kind: annotation.kind,
      markers,
      segment,
      crossing,
      label: text && anchor ? { text: shortened(text), x: anchor.x + 9, y: anchor.y - 9 } : null,
    });
  }
  return drawn;
}

/** The text cut to `maximumLabelCharacters`, with an ellipsis when cut. */
export function shortened(text: string): string {
  const oneLine = text.replace(/\s+/g, ' ');
  return oneLine.length <= maximumLabelCharacters
    ? oneLine
    : `${oneLine.slice(0, maximumLabelCharacters - 1).trimEnd()}…`;
}
