import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { CaseDetail, CaseStatus, CurrentUser, MeetingSummary } from '@emberline/shared';
import { AuthSession } from '../core/auth-session';
import { buttonNamed, textOf } from '../../testing/dom';
import { AgendaPlacement } from './agenda-placement';

const presenterId = '55555555-5555-4555-8555-555555555555';
const caseId = '66666666-6666-4666-8666-666666666666';

function user(id: string): CurrentUser {
  return {
    id,
    email: 'presenter@example.test',
    displayName: 'Dr Presenter',
    roles: ['presenting-physician'],
    boards: [],
    signInMethod: 'local',
    hasTotp: false,
    mustEnrolTotp: false,
  };
}

// An invented case; only its id, board, presenter and status matter here.
function caseDetail(status: CaseStatus): CaseDetail {
  return {
    id: caseId,
    caseCode: 'EL-001',
    board: { id: 'board-1', name: 'Liver board' },
    presenter: { id: presenterId, displayName: 'Dr Presenter' },
    status,
    permissions: { canEdit: true, canDelete: false },
  } as Partial<CaseDetail> as CaseDetail;
}

function meeting(id: string, startsAt: string, state: MeetingSummary['state']): MeetingSummary {
  return {
    id,
    boardId: 'board-1',
    boardName: 'Liver board',
    startsAt,
    durationMin: 60,
    chair: { id: 'chair', displayName: 'Dr Chair' },
    place: null,
    state,
    agendaCount: 1,
  };
}

describe('AgendaPlacement', () => {
  let fixture: ComponentFixture<AgendaPlacement>;
  let http: HttpTestingController;
  let placedIds: string[];

  function open(signedInId: string, status: CaseStatus): void {
    TestBed.inject(AuthSession).replace(user(signedInId));
    fixture = TestBed.createComponent(AgendaPlacement);
    fixture.componentRef.setInput('caseDetail', caseDetail(status));
    fixture.componentInstance.placed.subscribe((view) => placedIds.push(view.id));
    fixture.detectChanges();
  }

  beforeEach(async () => {
    placedIds = [];
    await TestBed.configureTestingModule({
      imports: [AgendaPlacement],
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

  it('offers only scheduled upcoming meetings and puts the case on the chosen one', async () => {
    open(presenterId, 'ready-for-board');
    http
      .expectOne('/api/boards/board-1/meetings')
      .flush([
        meeting('old', '2020-01-01T09:00:00.000Z', 'closed'),
        meeting('live', '2020-01-02T09:00:00.000Z', 'in-session'),
        meeting('next', '2099-01-01T09:00:00.000Z', 'scheduled'),
      ]);
    await fixture.whenStable();
    const component = fixture.componentInstance as unknown as {
      choices(): MeetingSummary[];
      chosenId: { set(id: string): void };
    };
    expect(component.choices().map((m) => m.id)).toEqual(['next']);
    component.chosenId.set('next');
    await fixture.whenStable();
    buttonNamed(fixture, "Put on a meeting's agenda").click();
    const request = http.expectOne('/api/meetings/next/agenda');
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({ caseId });
    request.flush(
      {
        ...meeting('next', '2099-01-01T09:00:00.000Z', 'scheduled'),
        agenda: [],
        requiredSpecialties: [],
      },
      { status: 201, statusText: 'Created' },
    );
    await fixture.whenStable();
    expect(placedIds).toEqual(['next']);
    expect(textOf(fixture)).toContain('On the agenda of the meeting of');
    const link = (fixture.nativeElement as HTMLElement).querySelector('a');
    expect(link?.getAttribute('href')).toBe('/meetings/next');
  });

  it('shows the server detail when the case is refused', async () => {
    open(presenterId, 'ready-for-board');
    http
      .expectOne('/api/boards/board-1/meetings')
      .flush([meeting('next', '2099-01-01T09:00:00.000Z', 'scheduled')]);
    await fixture.whenStable();
    (fixture.componentInstance as unknown as { chosenId: { set(id: string): void } }).chosenId.set(
      'next',
    );
    await fixture.whenStable();
    buttonNamed(fixture, "Put on a meeting's agenda").click();
    http
      .expectOne('/api/meetings/next/agenda')
      .flush(
        { type: 'about:blank', title: 'Conflict', status: 409, detail: 'The case is not ready.' },
        { status: 409, statusText: 'Conflict' },
      );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('The case is not ready.');
    expect(placedIds).toEqual([]);
  });

  it('says so when the board has no scheduled meeting ahead', async () => {
    open(presenterId, 'ready-for-board');
    http.expectOne('/api/boards/board-1/meetings').flush([]);
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('the board has no scheduled meeting ahead');
  });

  it('shows nothing and asks nothing for a draft', async () => {
    open(presenterId, 'draft');
    await fixture.whenStable();
    http.expectNone('/api/boards/board-1/meetings');
    expect(textOf(fixture).trim()).toBe('');
  });

  it('shows nothing and asks nothing for someone other than the presenter', async () => {
    open('77777777-7777-4777-8777-777777777777', 'ready-for-board');
    await fixture.whenStable();
    http.expectNone('/api/boards/board-1/meetings');
    expect(textOf(fixture).trim()).toBe('');
  });
});
