import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { createAnnotationSchema, type AnnotationView } from '@emberline/shared';
import { ViewerSession } from '../viewer-session';
import { AnnotationLayer, draftAnnotationId } from './annotation-layer';

const caseId = 'c0a80121-0000-4000-8000-000000000001';
const seriesId = 'c0a80121-0000-4000-8000-0000000000aa';
const otherSeriesId = 'c0a80121-0000-4000-8000-0000000000bb';

function view(id: string, series: string, canEdit: boolean): AnnotationView {
  return {
    id,
    caseId,
    seriesId: series,
    kind: 'point',
    points: [[1, 2, 3]],
    text: null,
    author: { id: 'u1', displayName: 'Dr Test' },
    meetingId: null,
    createdAt: '2026-04-14T10:00:00.000Z',
    updatedAt: '2026-04-14T10:00:00.000Z',
    canEdit,
  };
}

function setUp() {
  TestBed.configureTestingModule({
    providers: [
      provideZonelessChangeDetection(),
      provideHttpClient(),
      provideHttpClientTesting(),
      ViewerSession,
      AnnotationLayer,
    ],
  });
  return {
    http: TestBed.inject(HttpTestingController),
    session: TestBed.inject(ViewerSession),
    layer: TestBed.inject(AnnotationLayer),
  };
}

describe('AnnotationLayer', () => {
  it('keeps the annotations of the shown series and reads them again when told', () => {
    const { http, layer } = setUp();
    layer.load(caseId, seriesId);
    http
      .expectOne({ method: 'GET', url: `/api/cases/${caseId}/annotations` })
      .flush([view('a', seriesId, true), view('b', otherSeriesId, true)]);
    expect(layer.annotations().map((annotation) => annotation.id)).toEqual(['a']);
    layer.reload();
    http
      .expectOne(`/api/cases/${caseId}/annotations`)
      .flush([view('a', seriesId, true), view('c', seriesId, false)]);
    expect(layer.annotations().map((annotation) => annotation.id)).toEqual(['a', 'c']);
    http.verify();
  });

  it('posts a line once both ends are clicked, with a body the schema accepts', () => {
    const { http, session, layer } = setUp();
    layer.load(caseId, seriesId);
    http.expectOne(`/api/cases/${caseId}/annotations`).flush([]);
    layer.canAnnotate.set(true);
    session.mode.set('annotate');
    layer.chooseKind('line');
    layer.place([10, -5, 40]);
    // The first end shows as the draft while the second is awaited; nothing is sent yet.
    expect(layer.drawn().map((annotation) => annotation.id)).toEqual([draftAnnotationId]);
    http.expectNone(`/api/cases/${caseId}/annotations`);
    layer.place([22, -5, 40]);
    const request = http.expectOne({ method: 'POST', url: `/api/cases/${caseId}/annotations` });
    expect(createAnnotationSchema.safeParse(request.request.body).success).toBe(true);
    expect(request.request.body).toEqual({
      seriesId,
      kind: 'line',
      points: [
        [10, -5, 40],
        [22, -5, 40],
      ],
    });
    request.flush({
      ...view('new', seriesId, true),
      kind: 'line',
      points: request.request.body.points,
    });
    expect(layer.annotations().map((annotation) => annotation.id)).toEqual(['new']);
    expect(layer.draft().pointsLps).toEqual([]);
    http.verify();
  });

  it('waits for a note’s text, and tells a refusal in the problem’s words, keeping the draft', () => {
    const { http, session, layer } = setUp();
    layer.load(caseId, seriesId);
    http.expectOne(`/api/cases/${caseId}/annotations`).flush([]);
    layer.canAnnotate.set(true);
    session.mode.set('annotate');
    layer.chooseKind('note');
    layer.place([0, 0, 0]);
    http.expectNone({ method: 'POST' });
    layer.save('');
    expect(layer.problem()).toBe('A note needs its text');
    http.expectNone({ method: 'POST' });
    layer.save('Check the gap to the duct');
    http.expectOne({ method: 'POST', url: `/api/cases/${caseId}/annotations` }).flush(
      {
        type: 'about:blank',
        title: 'Conflict',
        status: 409,
        detail: 'The case is decided: its record is read-only.',
      },
      { status: 409, statusText: 'Conflict' },
    );
    expect(layer.problem()).toBe(
      'The annotation was not saved. The case is decided: its record is read-only.',
    );
    expect(layer.draft().pointsLps).toEqual([[0, 0, 0]]);
    http.verify();
  });

  it('takes no clicks from someone who may not annotate, and drops the draft on leaving the mode', () => {
    const { http, session, layer } = setUp();
    layer.load(caseId, seriesId);
    http.expectOne(`/api/cases/${caseId}/annotations`).flush([]);
    session.mode.set('annotate');
    layer.place([0, 0, 0]);
    expect(layer.draft().pointsLps).toEqual([]);
    layer.canAnnotate.set(true);
    layer.chooseKind('line');
    layer.place([0, 0, 0]);
    expect(layer.draft().pointsLps).toHaveLength(1);
    session.mode.set('navigate');
    TestBed.tick();
    expect(layer.draft().pointsLps).toEqual([]);
    expect(layer.drawn()).toEqual([]);
    http.verify();
  });

  it('hides the annotations from the views on request, the list keeping them', () => {
    const { http, layer } = setUp();
    layer.load(caseId, seriesId);
    http.expectOne(`/api/cases/${caseId}/annotations`).flush([view('a', seriesId, false)]);
    expect(layer.drawn()).toHaveLength(1);
    layer.isShown.set(false);
    expect(layer.drawn()).toEqual([]);
    expect(layer.annotations()).toHaveLength(1);
  });

  it('changes the text of an own note and deletes it, a note never left without text', async () => {
    const { http, layer } = setUp();
    layer.load(caseId, seriesId);
    const note = { ...view('n', seriesId, true), kind: 'note' as const, text: 'Old' };
    http.expectOne(`/api/cases/${caseId}/annotations`).flush([note]);
    expect(await layer.retext(note, '  ')).toBe(false);
    expect(layer.listProblem()).toBe('A note needs its text.');
    const saving = layer.retext(note, ' New text ');
    const patch = http.expectOne({ method: 'PATCH', url: '/api/annotations/n' });
    expect(patch.request.body).toEqual({ text: 'New text' });
    patch.flush({ ...note, text: 'New text' });
    expect(await saving).toBe(true);
    expect(layer.annotations()[0].text).toBe('New text');
    const removing = layer.remove(note);
    http.expectOne({ method: 'DELETE', url: '/api/annotations/n' }).flush(null, {
      status: 204,
      statusText: 'No Content',
    });
    await removing;
    expect(layer.annotations()).toEqual([]);
    http.verify();
  });
});
