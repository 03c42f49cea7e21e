import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { MeetingSummary } from '@emberline/shared';
import { textOf } from '../../testing/dom';
import { MyMeetings } from './my-meetings';

// Invented meetings of two boards, far in the past and far ahead of the real clock.
function meeting(
  id: string,
  boardName: string,
  startsAt: string,
  state: MeetingSummary['state'],
): MeetingSummary {
  return {
    id,
    boardId: `board-${boardName}`,
    boardName,
    startsAt,
    durationMin: 60,
    chair: { id: 'chair', displayName: 'Dr Chair' },
    place: null,
    state,
    agendaCount: 1,
  };
}

describe('MyMeetings', () => {
  let fixture: ComponentFixture<MyMeetings>;
  let http: HttpTestingController;

  function linksIn(sectionId: string): string[] {
    const section = (fixture.nativeElement as HTMLElement).querySelector(
      `section[aria-labelledby="${sectionId}"]`,
    );
    return Array.from(section?.querySelectorAll('a.when') ?? []).map(
      (link) => link.getAttribute('href') ?? '',
    );
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [MyMeetings],
      providers: [
        provideZonelessChangeDetection(),
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(MyMeetings);
    fixture.detectChanges();
  });

  afterEach(() => http.verify());

  it('splits the meetings of all boards into upcoming and past, naming each board', async () => {
    http
      .expectOne('/api/meetings')
      .flush([
        meeting('a', 'North board', '2020-03-01T09:00:00.000Z', 'closed'),
        meeting('b', 'South board', '2020-04-01T09:00:00.000Z', 'closed'),
        meeting('c', 'North board', '2099-02-01T09:00:00.000Z', 'scheduled'),
        meeting('d', 'South board', '2099-01-01T09:00:00.000Z', 'scheduled'),
      ]);
    await fixture.whenStable();
    expect(linksIn('upcoming-title')).toEqual(['/meetings/d', '/meetings/c']);
    expect(linksIn('past-title')).toEqual(['/meetings/b', '/meetings/a']);
    expect(textOf(fixture)).toContain('South board ·');
  });

  it('says when there is no meeting', async () => {
    http.expectOne('/api/meetings').flush([]);
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('No upcoming meeting on your boards.');
    expect(textOf(fixture)).toContain('No past meeting on your boards.');
  });

  it('shows the server detail when the meetings cannot be loaded', async () => {
    http
      .expectOne('/api/meetings')
      .flush(
        { type: 'about:blank', title: 'Unavailable', status: 503, detail: 'Try later.' },
        { status: 503, statusText: 'Service Unavailable' },
      );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('The meetings could not be loaded: Try later.');
  });
});
