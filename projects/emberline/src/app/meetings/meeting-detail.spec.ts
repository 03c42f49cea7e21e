import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { CurrentUser, MeetingView } from '@emberline/shared';
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
    })),
  };
}

describe('MeetingDetail', () => {
  let fixture: ComponentFixture<MeetingDetail>;
  let http: HttpTestingController;

  async function open(signedInId: string, view = meetingView()): Promise<void> {
    TestBed.inject(AuthSession).replace(user(signedInId));
    fixture = TestBed.createComponent(MeetingDetail);
    fixture.componentRef.setInput('id', 'meeting-1');
    fixture.detectChanges();
    http.expectOne('/api/meetings/meeting-1').flush(view);
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
    expect(textOf(fixture)).toContain('The live board session opens here when the meeting starts');
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

  it('disables moving the first item up and the last one down', async () => {
    await open(chairId);
    const byLabel = (label: string) =>
      moveButtons().find((button) => button.getAttribute('aria-label') === label);
    expect(byLabel('Move EL-001 up')?.disabled).toBe(true);
    expect(byLabel('Move EL-003 down')?.disabled).toBe(true);
    expect(byLabel('Move EL-002 down')?.disabled).toBe(false);
  });
});
