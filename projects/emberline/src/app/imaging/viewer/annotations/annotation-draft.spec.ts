import { createAnnotationSchema } from '@emberline/shared';
import {
  annotationRequest,
  isPlaced,
  minimumLineLengthMm,
  newAnnotationDraft,
  nextStep,
  placeAnnotationPoint,
  requestProblems,
} from './annotation-draft';

/*
 * The request bodies are checked against `createAnnotationSchema`, the contract the server
 * parses POST /api/cases/:id/annotations with (a line has two points, a point and a note one,
 * a note its text).
 */
const seriesId = '3f1e2d4c-5b6a-4789-8abc-def012345678';

describe('annotate mode', () => {
  it('makes a point from one click, its request accepted by the schema', () => {
    const { draft, refusal } = placeAnnotationPoint(
      newAnnotationDraft('point'),
      [12.3456, -40.1, 88.005],
    );
    expect(refusal).toBeNull();
    expect(isPlaced(draft)).toBe(true);
    const body = annotationRequest(draft, seriesId);
    // Kept to a hundredth of a millimetre.
    expect(body).toEqual({ seriesId, kind: 'point', points: [[12.35, -40.1, 88.01]] });
    expect(createAnnotationSchema.safeParse(body).success).toBe(true);
    expect(requestProblems(body)).toEqual([]);
  });

  it('makes a line from two clicks, refusing a second end closer than a millimetre', () => {
    let draft = newAnnotationDraft('line');
    expect(nextStep(draft)).toContain('first end');
    draft = placeAnnotationPoint(draft, [0, 0, 20]).draft;
    expect(isPlaced(draft)).toBe(false);
    expect(nextStep(draft)).toContain('second end');
    // 0.6 mm away (0.6² = 0.36 < 1): a double click, not a line.
    const tooClose = placeAnnotationPoint(draft, [0.6, 0, 20]);
    expect(tooClose.refusal).toContain(`${minimumLineLengthMm} mm`);
    expect(tooClose.draft).toBe(draft);
    // 3-4-5 triangle: 5 mm away.
    draft = placeAnnotationPoint(draft, [3, 4, 20]).draft;
    expect(isPlaced(draft)).toBe(true);
    const body = annotationRequest(draft, seriesId, '  ');
    expect(body).toEqual({
      seriesId,
      kind: 'line',
      points: [
        [0, 0, 20],
        [3, 4, 20],
      ],
    });
    expect(createAnnotationSchema.safeParse(body).success).toBe(true);
    // A third click starts the next line.
    const next = placeAnnotationPoint(draft, [9, 9, 9]).draft;
    expect(next.pointsLps).toEqual([[9, 9, 9]]);
  });

  it('asks a note for its text: without it the schema refuses, with it (trimmed) accepts', () => {
    const { draft } = placeAnnotationPoint(newAnnotationDraft('note'), [1, 2, 3]);
    expect(nextStep(draft)).toContain('Write the note');
    const bare = annotationRequest(draft, seriesId, '   ');
    expect(createAnnotationSchema.safeParse(bare).success).toBe(false);
    expect(requestProblems(bare)).toEqual(['A note needs its text']);
    const written = annotationRequest(draft, seriesId, '  Abuts the middle hepatic vein ');
    expect(written.text).toBe('Abuts the middle hepatic vein');
    expect(createAnnotationSchema.safeParse(written).success).toBe(true);
  });

  it('names what the schema refuses: too few points, a coordinate out of range', () => {
    const half = annotationRequest(
      placeAnnotationPoint(newAnnotationDraft('line'), [0, 0, 0]).draft,
      seriesId,
    );
    expect(requestProblems(half)).toEqual(['A line has 2 points']);
    const far = annotationRequest(
      placeAnnotationPoint(newAnnotationDraft('point'), [0, 0, 20_000]).draft,
      seriesId,
    );
    expect(requestProblems(far)).toEqual(['A coordinate must lie within ±10 000 mm']);
  });
});
