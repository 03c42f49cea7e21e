import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { CurrentUser, MeetingSummary, MeetingView } from '@emberline/shared';
import { AuthSession } from '../core/auth-session';
import { textOf } from '../../testing/dom';
import { MeetingDetail } from './meeting-detail';

const chairId = '11111111-1111-4111-8111-111111111111';

function user(id: string): CurrentUser {
  return {
    id,
    email: 'someone@example.test',
    displayName: 'Someone',
    roles: ['board-member'],
    boards: [],
    signInMethod: 'local',
    hasTotp: false,
    mustEnrolTotp: false,
  };
}

// Invented meeting and cases.
function meetingView(order: string[] = ['item-a', 'item-b', 'item-c']): MeetingView {
  const codes: Record<string, string> = {
    'item-a': 'EL-001',
    'item-b': 'EL-002',
    'item-c': 'EL-003',
  };
  return {
    id: 'meeting-1',
    boardId: 'board-1',
    boardName: 'Liver board',
    startsAt: '2026-12-09T15:00:00.000Z',
    durationMin: 90,
    chair: { id: chairId, displayName: 'Dr Chair' },
    place: 'Room 4',
    state: 'scheduled',
    agendaCount: order.length,
    requiredSpecialties: ['hepatology', 'interventional-radiology'],
    agenda: order.map((id, index) => ({
      id,
      position: index + 1,
      caseId: `case-${id}`,
      caseCode: codes[id],
      primaryDiagnosis: 'hcc',
      caseStatus: 'on-agenda',
      presenterName: 'Dr Presenter',
      isClosed: false,
    })),
  };
}

/** Lets resources take their answers and issue the requests that depend on them. */
async function settle(): Promise<void> {
  await new Promise((resolve) => setTimeout(resolve));
  TestBed.tick();
}

describe('MeetingDetail', () => {
  let fixture: ComponentFixture<MeetingDetail>;
  let http: HttpTestingController;

  async function open(
    signedInId: string,
    boardMeetings: MeetingSummary[] = [],
    view = meetingView(),
  ): Promise<void> {
    TestBed.inject(AuthSession).replace(user(signedInId));
    fixture = TestBed.createComponent(MeetingDetail);
    fixture.componentRef.setInput('id', 'meeting-1');
    fixture.detectChanges();
    http.expectOne('/api/meetings/meeting-1').flush(view);
    // whenStable would wait for the board's meetings too: let the resources react first.
    await settle();
    if (signedInId === chairId) {
      // Only the chair needs the board's other meetings, as targets of a move.
      http.expectOne('/api/boards/board-1/meetings').flush(boardMeetings);
    }
    await fixture.whenStable();
  }

  function moveButtons(): HTMLButtonElement[] {
    return Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll<HTMLButtonElement>('.moves button'),
    );
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [MeetingDetail],
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

  it('shows the agenda in order with links to the case files', async () => {
    await open('someone-else');
    const links = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll<HTMLAnchorElement>('.agenda a'),
    );
    expect(links.map((link) => link.textContent?.trim())).toEqual(['EL-001', 'EL-002', 'EL-003']);
    expect(links[0].getAttribute('href')).toBe('/cases/case-item-a');
    expect(textOf(fixture)).toContain('Room 4');
    // Not a member of the board here: no way into the live room is offered.
    expect(textOf(fixture)).not.toContain('board session');
  });

  it('offers no reordering to someone who is not the chair', async () => {
    await open('someone-else');
    expect(moveButtons()).toEqual([]);
  });

  it('sends the swapped order when the chair moves an item up', async () => {
    await open(chairId);
    const up = moveButtons().find(
      (button) => button.getAttribute('aria-label') === 'Move EL-002 up',
    );
    up?.click();
    const request = http.expectOne('/api/meetings/meeting-1/agenda/order');
    expect(request.request.method).toBe('PUT');
    expect(request.request.body).toEqual({ itemIds: ['item-b', 'item-a', 'item-c'] });
    request.flush(meetingView(['item-b', 'item-a', 'item-c']));
    await fixture.whenStable();
    const codes = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('.agenda a'),
    ).map((link) => link.textContent?.trim());
    expect(codes).toEqual(['EL-002', 'EL-001', 'EL-003']);
  });

  it('shows the server detail when reordering is refused', async () => {
    await open(chairId);
    moveButtons()
      .find((button) => button.getAttribute('aria-label') === 'Move EL-001 down')
      ?.click();
    http
      .expectOne('/api/meetings/meeting-1/agenda/order')
      .flush(
        { type: 'about:blank', title: 'Forbidden', status: 403, detail: 'Only the chair orders.' },
        { status: 403, statusText: 'Forbidden' },
      );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Only the chair orders.');
  });

  it('moves an item to another scheduled meeting ahead and reloads the agenda', async () => {
    const view = meetingView();
    const summary: MeetingSummary = {
      id: view.id,
      boardId: view.boardId,
      boardName: view.boardName,
      startsAt: view.startsAt,
      durationMin: view.durationMin,
      chair: view.chair,
      place: view.place,
      state: view.state,
      agendaCount: view.agendaCount,
    };
    await open(chairId, [
      summary,
      { ...summary, id: 'meeting-closed', startsAt: '2020-01-01T09:00:00.000Z', state: 'closed' },
      { ...summary, id: 'meeting-2', startsAt: '2099-01-01T09:00:00.000Z' },
    ]);
    const targets = (
      fixture.componentInstance as unknown as { moveTargets(): MeetingSummary[] }
    ).moveTargets();
    expect(targets.map((target) => target.id)).toEqual(['meeting-2']);
    (
      fixture.componentInstance as unknown as {
        moveTo(item: MeetingView['agenda'][number], targetId: string): void;
      }
    ).moveTo(meetingView().agenda[1], 'meeting-2');
    const request = http.expectOne('/api/agenda-items/item-b/move');
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({ meetingId: 'meeting-2' });
    request.flush({ ...summary, id: 'meeting-2', agenda: [], requiredSpecialties: [] });
    await settle();
    http.expectOne('/api/meetings/meeting-1').flush(meetingView(['item-a', 'item-c']));
    http.expectOne('/api/boards/board-1/meetings').flush([]);
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('EL-002 moved to another meeting.');
    expect(textOf(fixture)).not.toContain('EL-002 ·');
  });

  it('disables moving the first item up and the last one down', async () => {
    await open(chairId);
    const byLabel = (label: string) =>
      moveButtons().find((button) => button.getAttribute('aria-label') === label);
    expect(byLabel('Move EL-001 up')?.disabled).toBe(true);
    expect(byLabel('Move EL-003 down')?.disabled).toBe(true);
    expect(byLabel('Move EL-002 down')?.disabled).toBe(false);
  });
});
