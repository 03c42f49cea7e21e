/**
 * Board meetings and agendas through the API: who schedules, who sees, a ready case put on the
 * agenda (and the register's next meeting), the chair's order and moves, the board's quorum
 * specialties. Rules of the product (DEVELOPERS.md, "The product's shape").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  BoardMemberView,
  BoardView,
  CaseDetail,
  CaseSummary,
  MeetingSummary,
  MeetingView,
  Page,
  ProblemDetails,
} from '@emberline/shared';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';

let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;
let proceduralist: ApiClient;
let member: ApiClient;
let south: ApiClient;
let admin: ApiClient;
let members: BoardMemberView[];

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

const inDays = (days: number) => new Date(Date.now() + days * 86_400_000).toISOString();
const idOf = (displayEmail: string) => {
  const found = members.find((entry) => entry.email === displayEmail);
  if (!found) throw new Error(`${displayEmail} is not a member`);
  return found.userId;
};

async function schedule(client: ApiClient, days: number, chairEmail: string) {
  return client.post(`/api/boards/${ids.northBoard}/meetings`, {
    startsAt: inDays(days),
    durationMin: 90,
    chairId: idOf(chairEmail),
    place: 'Room 4.12',
  });
}

beforeAll(async () => {
  testApp = await startTestApp();
  ids = await resetToDemo(testApp.orm);
  presenter = await signedIn('presenter@emberline.test');
  proceduralist = await signedIn('proceduralist@emberline.test');
  member = await signedIn('member@emberline.test');
  south = await signedIn('south@emberline.test');
  admin = await signedIn('admin@emberline.test');
  members = (await member.get(`/api/boards/${ids.northBoard}/members`)).body as BoardMemberView[];
});

afterAll(async () => {
  await testApp?.close();
});

describe('scheduling', () => {
  it('lets a presenting physician, a proceduralist or an administrator schedule, not a board member', async () => {
    expect((await schedule(presenter, 7, 'proceduralist@emberline.test')).status).toBe(201);
    expect((await schedule(proceduralist, 14, 'proceduralist@emberline.test')).status).toBe(201);
    expect((await schedule(admin, 21, 'member@emberline.test')).status).toBe(201);
    expect((await schedule(member, 28, 'member@emberline.test')).status).toBe(403);
  });

  it('refuses a chair who is not a member of the board, naming the field', async () => {
    const southMembers = (await south.get(`/api/boards/${ids.southBoard}/members`))
      .body as BoardMemberView[];
    const response = await presenter.post(`/api/boards/${ids.northBoard}/meetings`, {
      startsAt: inDays(3),
      durationMin: 60,
      chairId: southMembers[0].userId,
    });
    expect(response.status).toBe(400);
    expect((response.body as ProblemDetails).errors?.map((error) => error.path)).toEqual([
      'chairId',
    ]);
  });

  it('refuses a start without its offset and a duration out of range', async () => {
    const response = await presenter.post(`/api/boards/${ids.northBoard}/meetings`, {
      startsAt: '2026-12-24 16:00',
      durationMin: 5,
      chairId: idOf('proceduralist@emberline.test'),
    });
    expect(response.status).toBe(400);
    expect((response.body as ProblemDetails).errors?.map((error) => error.path).sort()).toEqual([
      'durationMin',
      'startsAt',
    ]);
  });

  it('shows the board’s meetings to its members, oldest first, and hides them from other boards', async () => {
    const listed = (await member.get(`/api/boards/${ids.northBoard}/meetings`))
      .body as MeetingSummary[];
    expect(listed.length).toBeGreaterThanOrEqual(3);
    const starts = listed.map((meeting) => meeting.startsAt);
    expect([...starts].sort()).toEqual(starts);
    expect(listed[0]).toMatchObject({ state: 'scheduled', place: 'Room 4.12', agendaCount: 0 });
    expect((await south.get(`/api/boards/${ids.northBoard}/meetings`)).status).toBe(404);
    expect((await south.get(`/api/meetings/${listed[0].id}`)).status).toBe(404);
    const mine = (await south.get('/api/meetings')).body as MeetingSummary[];
    expect(mine.some((meeting) => meeting.boardId === ids.northBoard)).toBe(false);
  });
});

describe('the agenda', () => {
  let first: MeetingSummary;
  let second: MeetingSummary;

  beforeAll(async () => {
    const listed = (await member.get(`/api/boards/${ids.northBoard}/meetings`))
      .body as MeetingSummary[];
    [first, second] = listed.filter(
      (meeting) => meeting.chair.displayName === listed[0].chair.displayName,
    );
  });

  it('takes a ready case from its presenter; the case goes on agenda and the register shows the meeting', async () => {
    const added = await presenter.post(`/api/meetings/${first.id}/agenda`, {
      caseId: ids.northReady,
    });
    expect(added.status, JSON.stringify(added.body)).toBe(201);
    const view = added.body as MeetingView;
    expect(view.agenda).toHaveLength(1);
    expect(view.agenda[0]).toMatchObject({
      position: 1,
      caseId: ids.northReady,
      caseCode: 'NLB-2026-014',
      caseStatus: 'on-agenda',
    });
    const register = (await presenter.get('/api/cases?size=50')).body as Page<CaseSummary>;
    const row = register.items.find((item) => item.id === ids.northReady);
    expect(row?.status).toBe('on-agenda');
    expect(row?.nextMeetingAt).toBe(first.startsAt);
    const detail = (await presenter.get(`/api/cases/${ids.northReady}`)).body as CaseDetail;
    expect(detail.nextMeeting).toEqual({ id: first.id, startsAt: first.startsAt });
  });

  it('refuses a case that is not ready for board (409), one of another board (400), and a member (403)', async () => {
    const draft = await presenter.post(`/api/meetings/${first.id}/agenda`, {
      caseId: ids.northDraft,
    });
    expect(draft.status).toBe(409);
    const other = await presenter.post(`/api/meetings/${first.id}/agenda`, {
      caseId: ids.southReady,
    });
    expect(other.status).toBe(400);
    const byMember = await member.post(`/api/meetings/${first.id}/agenda`, {
      caseId: ids.northReady,
    });
    expect(byMember.status).toBe(403);
  });

  it('lets only the chair order the agenda, and only with every item once', async () => {
    const view = (await member.get(`/api/meetings/${first.id}`)).body as MeetingView;
    const itemIds = view.agenda.map((item) => item.id);
    expect(
      (await presenter.put(`/api/meetings/${first.id}/agenda/order`, { itemIds })).status,
    ).toBe(403);
    // Both meetings were scheduled with the proceduralist in the chair.
    const chair = proceduralist;
    expect(
      (await chair.put(`/api/meetings/${first.id}/agenda/order`, { itemIds: [] })).status,
    ).toBe(400);
    const ordered = await chair.put(`/api/meetings/${first.id}/agenda/order`, { itemIds });
    expect(ordered.status).toBe(200);
  });

  it('lets the chair move an item to another scheduled meeting of the board', async () => {
    const view = (await member.get(`/api/meetings/${first.id}`)).body as MeetingView;
    const chair = proceduralist;
    const moved = await chair.post(`/api/agenda-items/${view.agenda[0].id}/move`, {
      meetingId: second.id,
    });
    expect(moved.status, JSON.stringify(moved.body)).toBe(200);
    expect((moved.body as MeetingView).agenda.map((item) => item.caseId)).toEqual([ids.northReady]);
    expect(((await member.get(`/api/meetings/${first.id}`)).body as MeetingView).agenda).toEqual(
      [],
    );
    const register = (await presenter.get('/api/cases?size=50')).body as Page<CaseSummary>;
    expect(register.items.find((item) => item.id === ids.northReady)?.nextMeetingAt).toBe(
      second.startsAt,
    );
  });
});

describe('quorum', () => {
  it('lets an administrator name the specialties a board needs, shown to its members', async () => {
    const response = await admin.put(`/api/admin/boards/${ids.northBoard}/quorum`, {
      requiredSpecialties: ['hepatobiliary-surgery', 'interventional-radiology', 'hepatology'],
    });
    expect(response.status).toBe(200);
    const boards = (await member.get('/api/boards')).body as BoardView[];
    expect(boards.find((board) => board.id === ids.northBoard)?.requiredSpecialties).toEqual([
      'hepatobiliary-surgery',
      'interventional-radiology',
      'hepatology',
    ]);
    expect(
      (
        await admin.put(`/api/admin/boards/${ids.northBoard}/quorum`, {
          requiredSpecialties: ['hepatology', 'hepatology'],
        })
      ).status,
    ).toBe(400);
    expect(
      (
        await presenter.put(`/api/admin/boards/${ids.northBoard}/quorum`, {
          requiredSpecialties: [],
        })
      ).status,
    ).toBe(403);
  });
});
