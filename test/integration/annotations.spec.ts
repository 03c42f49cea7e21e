/**
 * Annotations on a case's series through the API: points, lines and notes; who makes, changes and
 * deletes them (the author, the chair of the meeting discussing the case, nobody else); a decided
 * case keeps them as they were; what reaches the meeting's room.
 *
 * Outside references (from memory, cited by section):
 * - DICOM PS3.3 §C.18.9, 3D Spatial Coordinates Macro, Graphic Type: POINT is a single point;
 *   POLYLINE connects its points, so one segment has exactly two. A note is a point with text,
 *   as a text object of the Graphic Annotation Module (§C.10.5) is anchored and carries its text.
 * - DICOM PS3.3 §C.7.6.2.1.1: patient coordinates in millimetres, LPS.
 * - RFC 9110 §15.5.1 400, §15.5.4 403, §15.5.5 404, §15.5.10 409, §15.3.5 204; RFC 9457 §3.
 * - OWASP ASVS 5.0 §8: a case out of reach answers 404, as one that does not exist.
 * Product rules (DEVELOPERS.md, "Roles" and "States"): presenting physicians, board members and
 * proceduralists annotate; from `decided` on the record of the board's work stays as it was.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  AnnotationDeletedEvent,
  AnnotationView,
  AuditAction,
  BoardMemberView,
  CaseStatus,
  MeetingView,
  ProblemDetails,
} from '@emberline/shared';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { Meeting } from '../../server/src/modules/meetings/meeting.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { RecordingBoardRoom } from './board-room-recorder';
import { insertSeriesRow } from './plan-fixtures';

let testApp: TestApp;
let ids: DemoIds;
const room = new RecordingBoardRoom();
let presenter: ApiClient;
let member: ApiClient;
let proceduralist: ApiClient;
let coordinator: ApiClient;
let admin: ApiClient;
let south: ApiClient;
let members: BoardMemberView[];
/** A scheduled meeting of the north board holding northReady; the proceduralist chairs it. */
let meetingId: string;
/** Series of northReady, northDraft (not on any agenda) and northDecided. */
let readySeries: string;
let draftSeries: string;
let decidedSeries: string;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

const userId = (email: string) => {
  const found = members.find((entry) => entry.email === email);
  if (!found) throw new Error(`${email} is not a member`);
  return found.userId;
};

const annotate = (client: ApiClient, caseId: string, body: object) =>
  client.post(`/api/cases/${caseId}/annotations`, body);
const point = (seriesId: string) => ({
  seriesId,
  kind: 'point',
  points: [[-42.5, 17, 103.25]],
});
const paths = (response: { body: unknown }) =>
  ((response.body as ProblemDetails).errors ?? []).map((error) => error.path);
const auditCount = (action: AuditAction, entityId: string) =>
  testApp.orm.em.fork().count(AuditEvent, { action, entityId });

async function setCaseStatus(caseId: string, status: CaseStatus) {
  const em = testApp.orm.em.fork();
  (await em.findOneOrFail(ClinicalCase, caseId)).status = status;
  await em.flush();
}

async function setMeetingState(state: 'scheduled' | 'in-session') {
  const em = testApp.orm.em.fork();
  (await em.findOneOrFail(Meeting, meetingId)).state = state;
  await em.flush();
}

beforeAll(async () => {
  testApp = await startTestApp({}, { boardRoom: room });
  ids = await resetToDemo(testApp.orm);
  presenter = await signedIn('presenter@emberline.test');
  member = await signedIn('member@emberline.test');
  proceduralist = await signedIn('proceduralist@emberline.test');
  coordinator = await signedIn('coordinator@emberline.test');
  admin = await signedIn('admin@emberline.test');
  south = await signedIn('south@emberline.test');
  members = (await member.get(`/api/boards/${ids.northBoard}/members`)).body as BoardMemberView[];
  const scheduled = await presenter.post(`/api/boards/${ids.northBoard}/meetings`, {
    startsAt: new Date(Date.now() + 3 * 86_400_000).toISOString(),
    durationMin: 60,
    chairId: userId('proceduralist@emberline.test'),
  });
  expect(scheduled.status).toBe(201);
  meetingId = (scheduled.body as MeetingView).id;
  const added = await presenter.post(`/api/meetings/${meetingId}/agenda`, {
    caseId: ids.northReady,
  });
  expect(added.status).toBe(201);
  const presenterId = userId('presenter@emberline.test');
  readySeries = await insertSeriesRow(testApp.orm, ids.northReady, presenterId);
  draftSeries = await insertSeriesRow(testApp.orm, ids.northDraft, presenterId);
  decidedSeries = await insertSeriesRow(testApp.orm, ids.northDecided, presenterId);
});

afterAll(async () => {
  await testApp?.close();
});

describe('making annotations', () => {
  it('takes a point from a board member and tells the room of the meeting discussing the case', async () => {
    const mark = room.emitted.length;
    const response = await annotate(member, ids.northReady, point(readySeries));
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    const created = response.body as AnnotationView;
    expect(response.headers.location).toBe(`/api/annotations/${created.id}`);
    expect(created).toMatchObject({
      caseId: ids.northReady,
      seriesId: readySeries,
      kind: 'point',
      points: [[-42.5, 17, 103.25]],
      text: null,
      author: { id: userId('member@emberline.test') },
      // The meeting is only scheduled: not made during a session.
      meetingId: null,
      canEdit: true,
    });
    const pushed = room.since(mark, 'annotation:created');
    expect(pushed).toHaveLength(1);
    expect(pushed[0].meetingId).toBe(meetingId);
    const broadcast = pushed[0].payload as AnnotationView;
    expect(broadcast.id).toBe(created.id);
    expect(broadcast.canEdit).toBeUndefined();
    expect(await auditCount('annotation.create', created.id)).toBe(1);
  });

  it('names the meeting when the case’s meeting is in session', async () => {
    await setMeetingState('in-session');
    try {
      const response = await annotate(presenter, ids.northReady, {
        seriesId: readySeries,
        kind: 'line',
        points: [
          [0, 0, 0],
          [30, 40, 0],
        ],
      });
      expect(response.status).toBe(201);
      expect((response.body as AnnotationView).meetingId).toBe(meetingId);
    } finally {
      await setMeetingState('scheduled');
    }
  });

  it('tells no room of an annotation on a case that is on no agenda', async () => {
    const mark = room.emitted.length;
    const response = await annotate(member, ids.northDraft, {
      ...point(draftSeries),
      kind: 'note',
      text: 'Segment VII, subcapsular',
    });
    expect(response.status).toBe(201);
    expect(response.body as AnnotationView).toMatchObject({
      kind: 'note',
      text: 'Segment VII, subcapsular',
      meetingId: null,
    });
    expect(room.since(mark)).toEqual([]);
  });

  it('refuses a line with one point, a point with two, a note without text and an unknown kind', async () => {
    const line = await annotate(member, ids.northReady, {
      seriesId: readySeries,
      kind: 'line',
      points: [[1, 2, 3]],
    });
    expect(line.status).toBe(400);
    expect((line.body as ProblemDetails).errors).toEqual([
      { path: 'points', message: 'A line has 2 points' },
    ]);
    const twoPoints = await annotate(member, ids.northReady, {
      seriesId: readySeries,
      kind: 'point',
      points: [
        [1, 2, 3],
        [4, 5, 6],
      ],
    });
    expect(twoPoints.status).toBe(400);
    expect(paths(twoPoints)).toEqual(['points']);
    const note = await annotate(member, ids.northReady, {
      ...point(readySeries),
      kind: 'note',
      text: '   ',
    });
    expect(note.status).toBe(400);
    expect((note.body as ProblemDetails).errors).toEqual([
      { path: 'text', message: 'A note needs its text' },
    ]);
    const circle = await annotate(member, ids.northReady, {
      ...point(readySeries),
      kind: 'circle',
    });
    expect(circle.status).toBe(400);
    expect(paths(circle)).toEqual(['kind']);
    const farAway = await annotate(member, ids.northReady, {
      ...point(readySeries),
      points: [[0, 0, 1e6]],
    });
    expect(farAway.status).toBe(400);
    expect(paths(farAway)).toEqual(['points.0.2']);
  });

  it('refuses a series of another case, naming seriesId', async () => {
    const response = await annotate(member, ids.northReady, point(draftSeries));
    expect(response.status).toBe(400);
    expect(paths(response)).toEqual(['seriesId']);
  });

  it('lets only the clinical members of the board annotate', async () => {
    // A coordinator sees a decided case but does not annotate; before the decision the case is
    // out of their reach altogether.
    expect((await annotate(coordinator, ids.northReady, point(readySeries))).status).toBe(404);
    expect((await annotate(coordinator, ids.northDecided, point(decidedSeries))).status).toBe(403);
    // An administrator sees no case; another board's member neither this one.
    expect((await annotate(admin, ids.northReady, point(readySeries))).status).toBe(404);
    expect((await annotate(south, ids.northReady, point(readySeries))).status).toBe(404);
    expect((await admin.get(`/api/cases/${ids.northReady}/annotations`)).status).toBe(404);
    expect((await south.get(`/api/cases/${ids.northReady}/annotations`)).status).toBe(404);
    expect((await coordinator.get(`/api/cases/${ids.northReady}/annotations`)).status).toBe(404);
  });

  it('refuses an annotation on a decided case (409)', async () => {
    const response = await annotate(member, ids.northDecided, point(decidedSeries));
    expect(response.status).toBe(409);
    expect((response.body as ProblemDetails).detail).toMatch(/decided/);
    expect((await coordinator.get(`/api/cases/${ids.northDecided}/annotations`)).status).toBe(200);
  });
});

describe('changing and deleting', () => {
  let byMember: AnnotationView;
  let byPresenter: AnnotationView;

  beforeAll(async () => {
    byMember = (await annotate(member, ids.northReady, point(readySeries))).body as AnnotationView;
    byPresenter = (
      await annotate(presenter, ids.northReady, {
        ...point(readySeries),
        kind: 'note',
        text: 'Portal vein branch',
      })
    ).body as AnnotationView;
  });

  const canEditOf = async (client: ApiClient) => {
    const listed = (await client.get(`/api/cases/${ids.northReady}/annotations`))
      .body as AnnotationView[];
    return new Map(listed.map((annotation) => [annotation.id, annotation.canEdit]));
  };

  it('tells each reader what they may edit: the author their own, the chair every one', async () => {
    const forMember = await canEditOf(member);
    expect(forMember.get(byMember.id)).toBe(true);
    expect(forMember.get(byPresenter.id)).toBe(false);
    const forPresenter = await canEditOf(presenter);
    expect(forPresenter.get(byMember.id)).toBe(false);
    expect(forPresenter.get(byPresenter.id)).toBe(true);
    const forChair = await canEditOf(proceduralist);
    expect([...forChair.values()].every((canEdit) => canEdit === true)).toBe(true);
    expect(forChair.size).toBeGreaterThanOrEqual(4);
  });

  it('refuses another member’s change or deletion (403) and takes the author’s', async () => {
    expect(
      (await presenter.patch(`/api/annotations/${byMember.id}`, { points: [[1, 1, 1]] })).status,
    ).toBe(403);
    expect((await presenter.delete(`/api/annotations/${byMember.id}`)).status).toBe(403);
    const mark = room.emitted.length;
    const moved = await member.patch(`/api/annotations/${byMember.id}`, {
      points: [[-40, 15, 100]],
    });
    expect(moved.status).toBe(200);
    expect(moved.body as AnnotationView).toMatchObject({
      points: [[-40, 15, 100]],
      canEdit: true,
    });
    const pushed = room.since(mark, 'annotation:updated');
    expect(pushed.map((emit) => [emit.meetingId, (emit.payload as AnnotationView).id])).toEqual([
      [meetingId, byMember.id],
    ]);
    // The same change again changes nothing: no audit entry, no broadcast.
    const again = room.emitted.length;
    expect(
      (await member.patch(`/api/annotations/${byMember.id}`, { points: [[-40, 15, 100]] })).status,
    ).toBe(200);
    expect(room.since(again)).toEqual([]);
    expect(await auditCount('annotation.update', byMember.id)).toBe(1);
  });

  it('keeps a change within the kind: one point, a note’s text', async () => {
    const twoPoints = await member.patch(`/api/annotations/${byMember.id}`, {
      points: [
        [0, 0, 0],
        [1, 1, 1],
      ],
    });
    expect(twoPoints.status).toBe(400);
    expect((twoPoints.body as ProblemDetails).errors).toEqual([
      { path: 'points', message: 'A point has 1 point' },
    ]);
    const emptied = await presenter.patch(`/api/annotations/${byPresenter.id}`, { text: '' });
    expect(emptied.status).toBe(400);
    expect(paths(emptied)).toEqual(['text']);
    const unknownField = await presenter.patch(`/api/annotations/${byPresenter.id}`, {
      kind: 'line',
    });
    expect(unknownField.status).toBe(400);
  });

  it('lets the chair of the meeting discussing the case change and delete anyone’s', async () => {
    const retexted = await proceduralist.patch(`/api/annotations/${byPresenter.id}`, {
      text: 'Right portal vein branch',
    });
    expect(retexted.status).toBe(200);
    expect(retexted.body as AnnotationView).toMatchObject({
      text: 'Right portal vein branch',
      author: { id: userId('presenter@emberline.test') },
    });
    const mark = room.emitted.length;
    expect((await proceduralist.delete(`/api/annotations/${byMember.id}`)).status).toBe(204);
    expect(room.since(mark, 'annotation:deleted').map((emit) => emit.payload)).toEqual([
      { id: byMember.id, caseId: ids.northReady } satisfies AnnotationDeletedEvent,
    ]);
    expect((await member.patch(`/api/annotations/${byMember.id}`, { text: 'x' })).status).toBe(404);
    expect(await auditCount('annotation.delete', byMember.id)).toBe(1);
    const listed = (await member.get(`/api/cases/${ids.northReady}/annotations`))
      .body as AnnotationView[];
    expect(listed.some((annotation) => annotation.id === byMember.id)).toBe(false);
  });

  it('gives the chair no say over a case their meeting does not hold', async () => {
    const note = (await annotate(member, ids.northDraft, point(draftSeries)))
      .body as AnnotationView;
    expect(
      (await proceduralist.patch(`/api/annotations/${note.id}`, { points: [[2, 2, 2]] })).status,
    ).toBe(403);
    expect((await proceduralist.delete(`/api/annotations/${note.id}`)).status).toBe(403);
    expect((await member.delete(`/api/annotations/${note.id}`)).status).toBe(204);
  });

  it('hides an annotation whose case is out of reach (404)', async () => {
    expect((await south.patch(`/api/annotations/${byPresenter.id}`, { text: 'x' })).status).toBe(
      404,
    );
    expect((await admin.delete(`/api/annotations/${byPresenter.id}`)).status).toBe(404);
    expect((await member.delete('/api/annotations/not-an-id')).status).toBe(404);
  });

  it('keeps the annotations of a decided case as they were (409), for author and chair alike', async () => {
    await setCaseStatus(ids.northReady, 'decided');
    try {
      expect(
        (await presenter.patch(`/api/annotations/${byPresenter.id}`, { text: 'Later' })).status,
      ).toBe(409);
      expect((await proceduralist.delete(`/api/annotations/${byPresenter.id}`)).status).toBe(409);
      const forChair = await canEditOf(proceduralist);
      expect([...forChair.values()].every((canEdit) => canEdit === false)).toBe(true);
    } finally {
      await setCaseStatus(ids.northReady, 'on-agenda');
    }
    const listed = (await presenter.get(`/api/cases/${ids.northReady}/annotations`))
      .body as AnnotationView[];
    expect(listed.find((annotation) => annotation.id === byPresenter.id)?.text).toBe(
      'Right portal vein branch',
    );
  });
});
