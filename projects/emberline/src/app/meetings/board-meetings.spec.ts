import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { BoardMemberView, CurrentUser, MeetingSummary, Role } from '@emberline/shared';
import { AuthSession } from '../core/auth-session';
import { textOf } from '../../testing/dom';
import { BoardMeetings } from './board-meetings';

const meUserId = '22222222-2222-4222-8222-222222222222';

function user(roles: Role[]): CurrentUser {
  return {
    id: meUserId,
    email: 'me@example.test',
    displayName: 'Me',
    roles,
    boards: [],
    signInMethod: 'local',
    hasTotp: false,
    mustEnrolTotp: false,
  };
}

function member(userId: string): BoardMemberView {
  return {
    userId,
    displayName: `Member ${userId.slice(0, 4)}`,
    email: 'member@example.test',
    specialty: 'hepatology',
    roles: ['board-member'],
  };
}

// Invented meetings: one long past, one far ahead (relative to the real clock).
function meeting(id: string, startsAt: string, state: MeetingSummary['state']): MeetingSummary {
  return {
    id,
    boardId: 'board-1',
    boardName: 'Liver board',
    startsAt,
    durationMin: 90,
    chair: { id: meUserId, displayName: 'Dr Chair' },
    place: 'Room 4',
    state,
    agendaCount: 2,
  };
}

describe('BoardMeetings', () => {
  let fixture: ComponentFixture<BoardMeetings>;
  let http: HttpTestingController;

  async function open(roles: Role[], members: BoardMemberView[]): Promise<void> {
    TestBed.inject(AuthSession).replace(user(roles));
    fixture = TestBed.createComponent(BoardMeetings);
    fixture.componentRef.setInput('boardId', 'board-1');
    fixture.componentRef.setInput('boardName', 'Liver board');
    fixture.componentRef.setInput('members', members);
    fixture.detectChanges();
    http
      .expectOne('/api/boards/board-1/meetings')
      .flush([
        meeting('past-1', '2020-01-10T09:00:00.000Z', 'closed'),
        meeting('next-1', '2099-01-10T09:00:00.000Z', 'scheduled'),
      ]);
    await fixture.whenStable();
  }

  function hasScheduleButton(): boolean {
    return Array.from((fixture.nativeElement as HTMLElement).querySelectorAll('button')).some(
      (button) => button.textContent?.includes('Schedule a meeting'),
    );
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [BoardMeetings],
      providers: [
        provideZonelessChangeDetection(),
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
  });

  afterEach(() => http.verify());

  it('lists the upcoming meeting before the past one, each linking to its page', async () => {
    await open(['board-member'], [member(meUserId)]);
    const links = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll<HTMLAnchorElement>('a.when'),
    ).map((link) => link.getAttribute('href'));
    expect(links).toEqual(['/meetings/next-1', '/meetings/past-1']);
    expect(textOf(fixture)).toContain(
      '90 min · chaired by Dr Chair · Room 4 · 2 cases on the agenda',
    );
  });

  it('offers scheduling to a presenting physician who is a member', async () => {
    await open(['presenting-physician'], [member(meUserId)]);
    expect(hasScheduleButton()).toBe(true);
  });

  it('does not offer scheduling to a presenting physician of another board', async () => {
    await open(['presenting-physician'], [member('33333333-3333-4333-8333-333333333333')]);
    expect(hasScheduleButton()).toBe(false);
  });

  it('does not offer scheduling to a board member', async () => {
    await open(['board-member'], [member(meUserId)]);
    expect(hasScheduleButton()).toBe(false);
  });

  it('offers scheduling to an administrator', async () => {
    await open(['administrator'], [member('33333333-3333-4333-8333-333333333333')]);
    expect(hasScheduleButton()).toBe(true);
  });
});
