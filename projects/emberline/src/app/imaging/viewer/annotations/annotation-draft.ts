/**
 * The annotate mode's state (pure): which kind is being made, the points clicked so far (LPS
 * millimetres, from the slice views' picks) and, for a note, its text; and the request body it
 * becomes (POST /api/cases/:id/annotations, `createAnnotationSchema`).
 */
import {
  createAnnotationSchema,
  vector3,
  type AnnotationKind,
  type CreateAnnotation,
  type Vec3,
} from '@emberline/shared';

export interface AnnotationDraft {
  kind: AnnotationKind;
  /** The points placed so far, in the order clicked. */
  pointsLps: Vec3[];
}

/**
 * The two ends of a line closer than this are taken for a double click, not a line, mm: a
 * shorter line would show as a dot on every view.
 */
export const minimumLineLengthMm = 1;

/** Points kept in the request, to a hundredth of a millimetre (far below any voxel). */
const decimals = 100;

export function newAnnotationDraft(kind: AnnotationKind): AnnotationDraft {
  return { kind, pointsLps: [] };
}

/** How many points the kind takes: a line two, a point and a note one. */
export function pointsNeeded(kind: AnnotationKind): 1 | 2 {
  return kind === 'line' ? 2 : 1;
}

export function isPlaced(draft: AnnotationDraft): boolean {
  return draft.pointsLps.length === pointsNeeded(draft.kind);
}

/** A click while annotating: the next point, or, once all are placed, the first of a new one. */
export function placeAnnotationPoint(
  draft: AnnotationDraft,
  pointLps: Readonly<Vec3>,
): { draft: AnnotationDraft; refusal: string | null } {
  const point: Vec3 = [pointLps[0], pointLps[1], pointLps[2]];
  if (isPlaced(draft)) return { draft: { ...draft, pointsLps: [point] }, refusal: null };
  const first = draft.pointsLps[0];
  if (draft.kind === 'line' && first && vector3.distance(first, point) < minimumLineLengthMm) {
    return {
      draft,
      refusal: `The second end lies less than ${minimumLineLengthMm} mm from the first; click it further away.`,
    };
  }
  return { draft: { ...draft, pointsLps: [...draft.pointsLps, point] }, refusal: null };
}

/** What to do next, in words, for the strip under the views. */
export function nextStep(draft: AnnotationDraft): string {
  const placed = draft.pointsLps.length;
  if (draft.kind === 'line') {
    if (placed === 0) return 'Click the first end of the line on a slice view.';
    if (placed === 1) return 'Click the second end (on any view).';
    return 'Saving the line…';
  }
  if (placed === 0) {
    return draft.kind === 'note'
      ? 'Click where the note belongs on a slice view.'
      : 'Click the point on a slice view.';
  }
  return draft.kind === 'note' ? 'Write the note and save it.' : 'Saving the point…';
}

/** The POST body of a placed draft on a series; text only when there is some. */
export function annotationRequest(
  draft: AnnotationDraft,
  seriesId: string,
  text?: string,
): CreateAnnotation {
  const trimmed = text?.trim();
  return {
    seriesId,
    kind: draft.kind,
    points: draft.pointsLps.map(
      (point) => point.map((value) => Math.round(value * decimals) / decimals) as Vec3,
    ),
    ...(trimmed ? { text: trimmed } : {}),
  };
}

/**
 * What is wrong with a request body, in the schema's words (the server checks the same schema
 * and answers 400 with the same sentences); empty when it is sound.
 */
export function requestProblems(body: unknown): string[] {
  const result = createAnnotationSchema.safeParse(body);
  return result.success ? [] : result.error.issues.map((issue) => issue.message);
}
