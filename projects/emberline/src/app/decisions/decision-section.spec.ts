import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import {
  clinicalCaution,
  treatmentLabels,
  type CaseDetail,
  type CaseStatus,
  type CurrentUser,
  type DecisionView,
  type PlanView,
  type Role,
} from '@emberline/shared';
import { CaseFileState } from '../cases/case-file-state';
import { AuthSession } from '../core/auth-session';
import { textOf } from '../../testing/dom';
import { DecisionSection } from './decision-section';

// Invented demo board, case and people.
const caseId = '3f2e1d0c-9b8a-4776-8554-433221100fed';
const boardId = '0b501abd-97fb-4520-b198-4899fae861f7';
const decisionUrl = `/api/cases/${caseId}/decision`;

function user(roles: Role[], onBoard: string = boardId): CurrentUser {
  return {
    id: 'user-1',
    email: 'someone@example.test',
    displayName: 'Dr Someone',
    roles,
    boards: [
      { boardId: onBoard, boardName: 'North Liver Board', specialty: 'interventional-radiology' },
    ],
    signInMethod: 'local',
    hasTotp: false,
    mustEnrolTotp: false,
  };
}

function caseDetail(status: CaseStatus): CaseDetail {
  return {
    id: caseId,
    board: { id: boardId, name: 'North Liver Board' },
    status,
    permissions: { canEdit: false, canDelete: false },
  } as CaseDetail;
}

const decision: DecisionView = {
  id: 'decision-1',
  caseId,
  meetingId: 'meeting-1',
  agendaItemId: 'item-1',
  outcome: 'ablation-mw',
  selectedPlan: { id: 'plan-1', name: 'Anterior subcostal' },
  rationale: 'Single 2.4 cm lesion in segment VIII, clear window.',
  conditions: 'Platelets above 50 on the day.',
  signer: { id: 'user-2', displayName: 'Dr Lindqvist' },
  signedAt: '2026-12-09T15:40:00.000Z',
  signInMethod: 'saml',
  quorum: {
    isMet: false,
    required: ['hepatology', 'hepatobiliary-surgery'],
    missing: ['hepatobiliary-surgery'],
    presentCount: 4,
    explanation: 'Not met: hepatobiliary surgery is missing.',
  },
  quorumOverrideReason: 'Surgeon agreed by telephone before the meeting.',
  urgency: 'priority',
  amendments: [
    {
      id: 'a1',
      reason: 'Unit of the platelet count',
      text: 'Platelets above 50 × 10⁹/L.',
      signer: { id: 'user-2', displayName: 'Dr Lindqvist' },
      signedAt: '2026-12-10T09:00:00.000Z',
    },
    {
      id: 'a2',
      reason: 'Anaesthesia',
      text: 'Under general anaesthesia.',
      signer: { id: 'user-3', displayName: 'Dr Mensah' },
      signedAt: '2026-12-11T09:00:00.000Z',
    },
  ],
};

const plans = [
  { id: 'plan-1', name: 'Anterior subcostal', status: 'assessed' },
  { id: 'plan-2', name: 'Still a draft', status: 'draft' },
] as PlanView[];

describe('DecisionSection', () => {
  let fixture: ComponentFixture<DecisionSection>;
  let http: HttpTestingController;
  let caseReloads: number;

  async function open(roles: Role[], status: CaseStatus, onBoard = boardId): Promise<void> {
    caseReloads = 0;
    await TestBed.configureTestingModule({
      imports: [DecisionSection],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        {
          provide: CaseFileState,
          useValue: {
            caseId: signal(caseId),
            detail: signal(caseDetail(status)),
            resource: { reload: () => caseReloads++ },
          },
        },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    TestBed.inject(AuthSession).replace(user(roles, onBoard));
    fixture = TestBed.createComponent(DecisionSection);
    fixture.detectChanges();
    await settle();
  }

  /** Lets resources take their answers and issue the requests that follow (whenStable would
   * wait for the answers of requests still open). */
  async function settle(): Promise<void> {
    await new Promise((resolve) => setTimeout(resolve));
    TestBed.tick();
  }

  function noDecision(): void {
    http
      .expectOne(decisionUrl)
      .flush(
        { type: 'about:blank', title: 'Not found', status: 404, detail: 'No decision.' },
        { status: 404, statusText: 'Not Found' },
      );
  }

  afterEach(() => http.verify());

  it('says in words that no decision is recorded, and offers a board member no form', async () => {
    await open(['board-member'], 'on-agenda');
    noDecision();
    await settle();

    expect(textOf(fixture)).toContain('No decision recorded yet.');
    expect((fixture.nativeElement as HTMLElement).querySelector('form')).toBeNull();
  });

  it('offers a proceduralist of the board the form, with only the assessed plans', async () => {
    await open(['proceduralist'], 'on-agenda');
    noDecision();
    await settle();
    http.expectOne(`/api/cases/${caseId}/plans`).flush(plans);
    await settle();

    expect(textOf(fixture)).toContain('Record decision');
    const form = fixture.debugElement.query((node) => node.name === 'em-decision-record-form');
    expect(form.componentInstance.plans()).toEqual([plans[0]]);
  });

  it('offers no form to a proceduralist of another board', async () => {
    await open(['proceduralist'], 'on-agenda', 'another-board');
    noDecision();
    await settle();

    expect((fixture.nativeElement as HTMLElement).querySelector('form')).toBeNull();
  });

  it('tells a proceduralist why no decision can be recorded off the agenda', async () => {
    await open(['proceduralist'], 'ready-for-board');
    noDecision();
    await settle();

    expect(textOf(fixture)).toContain(
      "A decision is recorded while the case is on a meeting's agenda; this case is ready for board.",
    );
    expect((fixture.nativeElement as HTMLElement).querySelector('form')).toBeNull();
  });

  it('shows the signed decision in full, its amendments in order, and the caution', async () => {
    await open(['board-member'], 'decided');
    http.expectOne(decisionUrl).flush(decision);
    await settle();

    const text = textOf(fixture);
    expect(text).toContain(clinicalCaution);
    for (const part of [
      treatmentLabels['ablation-mw'],
      'Anterior subcostal',
      decision.rationale,
      'Platelets above 50 on the day.',
      'Dr Lindqvist',
      'Hospital single sign-on, renewed within five minutes of signing',
      'Not met: hepatobiliary surgery is missing.',
      'Recorded without quorum by the chair, because',
      'Surgeon agreed by telephone before the meeting.',
    ]) {
      expect(text).toContain(part);
    }
    expect(
      (fixture.nativeElement as HTMLElement).querySelector('[data-decision-urgency]')?.textContent,
    ).toBe('Priority');
    const signedAt = (fixture.nativeElement as HTMLElement).querySelector('[data-decision] time');
    expect(signedAt?.getAttribute('datetime')).toBe(decision.signedAt);
    const amendments = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('[data-amendment]'),
    ).map((item) => item.textContent?.replace(/\s+/g, ' ') ?? '');
    expect(amendments).toHaveLength(2);
    expect(amendments[0]).toContain('Unit of the platelet count');
    expect(amendments[1]).toContain('Under general anaesthesia.');
    expect((fixture.nativeElement as HTMLElement).querySelector('form')).toBeNull();
  });

  it('offers a proceduralist of the board the amendment form under the decision', async () => {
    await open(['proceduralist'], 'decided');
    http.expectOne(decisionUrl).flush({ ...decision, amendments: [] });
    await settle();

    expect(textOf(fixture)).toContain('No amendment to this decision.');
    expect(textOf(fixture)).toContain('Add amendment');
  });

  it('shows the recorded decision and reads the case again, now read-only', async () => {
    await open(['proceduralist'], 'on-agenda');
    noDecision();
    await settle();
    http.expectOne(`/api/cases/${caseId}/plans`).flush(plans);
    await settle();

    const form = fixture.debugElement.query((node) => node.name === 'em-decision-record-form');
    form.triggerEventHandler('recorded', decision);
    await settle();

    expect(caseReloads).toBe(1);
    expect(textOf(fixture)).toContain(decision.rationale);
    expect(textOf(fixture)).not.toContain('No decision recorded yet.');
  });
});
