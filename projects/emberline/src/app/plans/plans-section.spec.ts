import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatDialog } from '@angular/material/dialog';
import { provideRouter } from '@angular/router';
import type { PlanView } from '@emberline/shared';
import { of } from 'rxjs';
import { CaseFileState } from '../cases/case-file-state';
import { buttonNamed, textOf } from '../../testing/dom';
import { PlansSection } from './plans-section';

const caseId = '1a2b3c4d-0000-4000-8000-000000000001';
const seriesId = '1a2b3c4d-0000-4000-8000-000000000002';

function plan(overrides: Partial<PlanView>): PlanView {
  return {
    id: 'plan-1',
    caseId,
    seriesId,
    name: 'Segment VIII, lateral',
    status: 'draft',
    applicators: [
      {
        entry: [0, 0, 0],
        target: [30, 40, 0],
        profileId: 'profile-1',
        profileName: 'Demo microwave 14 G',
        powerW: 80,
        timeS: 360,
      },
    ],
    notes: null,
    author: { id: 'user-1', displayName: 'Dr Presenter' },
    createdAt: '2026-03-01T10:00:00.000Z',
    updatedAt: '2026-03-01T10:00:00.000Z',
    ...overrides,
  };
}

describe('PlansSection', () => {
  let fixture: ComponentFixture<PlansSection>;
  let http: HttpTestingController;

  async function open(plans: PlanView[]): Promise<void> {
    fixture.detectChanges();
    http.expectOne(`/api/cases/${caseId}/plans`).flush(plans);
    await fixture.whenStable();
    // Each plan's assessment control and the comparison read the plans' assessments.
    for (const request of http.match((candidate) => candidate.url.endsWith('/assessments'))) {
      request.flush([]);
    }
    // The presenter's cards read the safety profiles to judge by.
    for (const request of http.match('/api/safety-profiles')) request.flush([]);
    await fixture.whenStable();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [PlansSection],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        {
          provide: CaseFileState,
          useValue: {
            caseId: signal(caseId),
            detail: signal({ permissions: { canEdit: true, canDelete: true } }),
          },
        },
        // The confirmation is answered "yes" at once.
        { provide: MatDialog, useValue: { open: () => ({ afterClosed: () => of(true) }) } },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(PlansSection);
  });

  afterEach(() => http.verify());

  it('lists each plan with its state and applicators, the path length from entry and target', async () => {
    await open([plan({}), plan({ id: 'plan-2', name: 'Anterior', status: 'submitted' })]);
    const text = textOf(fixture);
    expect(text).toContain('Segment VIII, lateral');
    expect(text).toContain('Draft');
    expect(text).toContain('Submitted');
    expect(text).toContain('Demo microwave 14 G');
    // A 3-4-5 triangle: entry (0, 0, 0) to target (30, 40, 0) mm is 50 mm.
    expect(text).toContain('50.0 mm');
    const link = (fixture.nativeElement as HTMLElement).querySelector<HTMLAnchorElement>(
      '[data-plan="plan-2"] a',
    );
    expect(link?.getAttribute('href')).toBe(
      `/cases/${caseId}/imaging/${seriesId}/viewer?plan=plan-2`,
    );
  });

  it('offers deletion for drafts only, and removes the plan once the server has', async () => {
    await open([plan({}), plan({ id: 'plan-2', name: 'Anterior', status: 'submitted' })]);
    const deleteButtons = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('[data-plan] button'),
    ).filter((button) => button.textContent?.includes('Delete draft'));
    expect(deleteButtons.length).toBe(1);
    buttonNamed(fixture, 'delete Delete draft').click();
    const request = http.expectOne('/api/plans/plan-1');
    expect(request.request.method).toBe('DELETE');
    request.flush(null, { status: 204, statusText: 'No Content' });
    await fixture.whenStable();
    expect(textOf(fixture)).not.toContain('Segment VIII, lateral');
    expect(textOf(fixture)).toContain('Anterior');
  });

  it('copies a submitted plan as a new draft, shows it last, highlighted, with the focus on it', async () => {
    await open([plan({}), plan({ id: 'plan-2', name: 'Anterior', status: 'submitted' })]);
    const element = fixture.nativeElement as HTMLElement;
    const copyButtons = Array.from(element.querySelectorAll('[data-plan] button')).filter(
      (button) => button.textContent?.includes('Copy as new draft'),
    );
    // A draft is edited, not copied: only the submitted plan offers a copy.
    expect(copyButtons).toHaveLength(1);
    buttonNamed(fixture, 'content_copy Copy as new draft').click();
    const request = http.expectOne('/api/plans/plan-2/copy');
    expect(request.request.method).toBe('POST');
    request.flush(plan({ id: 'plan-3', name: 'Anterior (revision 2)', status: 'draft' }), {
      status: 201,
      statusText: 'Created',
    });
    await fixture.whenStable();
    for (const read of http.match((candidate) => candidate.url.endsWith('/assessments'))) {
      read.flush([]);
    }
    for (const read of http.match('/api/safety-profiles')) read.flush([]);
    await fixture.whenStable();
    const cards = Array.from(element.querySelectorAll<HTMLElement>('section[data-plan]'));
    expect(cards.map((card) => card.dataset['plan'])).toEqual(['plan-1', 'plan-2', 'plan-3']);
    const copy = cards[2];
    expect(copy.dataset['newDraft']).toBe('true');
    expect(copy.textContent).toContain('Just copied');
    expect(copy.querySelector('a')?.textContent).toContain('Edit the new draft in the viewer');
    expect(copy.querySelector('a')?.getAttribute('href')).toBe(
      `/cases/${caseId}/imaging/${seriesId}/viewer?plan=plan-3`,
    );
    expect(document.activeElement?.textContent?.trim()).toBe('Anterior (revision 2)');
    expect(textOf(fixture)).toContain(
      'Anterior was copied as the new draft Anterior (revision 2).',
    );
  });

  it('tells the refusal when a copy fails, and adds no plan', async () => {
    await open([plan({ id: 'plan-2', name: 'Anterior', status: 'assessed' })]);
    buttonNamed(fixture, 'content_copy Copy as new draft').click();
    http.expectOne('/api/plans/plan-2/copy').flush(
      {
        type: 'about:blank',
        title: 'Forbidden',
        status: 403,
        detail: 'Only the presenting physician of this case drafts its plans.',
      },
      { status: 403, statusText: 'Forbidden' },
    );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain(
      'The plan Anterior was not copied. Only the presenting physician of this case drafts its plans.',
    );
    expect(
      (fixture.nativeElement as HTMLElement).querySelectorAll('section[data-plan]'),
    ).toHaveLength(1);
  });

  it('keeps the plan and tells the server refusal when a deletion fails', async () => {
    await open([plan({})]);
    buttonNamed(fixture, 'delete Delete draft').click();
    http.expectOne('/api/plans/plan-1').flush(
      {
        type: 'about:blank',
        title: 'Conflict',
        status: 409,
        detail: 'Only a draft can be deleted.',
      },
      { status: 409, statusText: 'Conflict' },
    );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('was not deleted. Only a draft can be deleted.');
    expect(textOf(fixture)).toContain('Segment VIII, lateral');
  });
});
