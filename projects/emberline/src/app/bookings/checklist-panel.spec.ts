import { provideRouter } from '@angular/router';
import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatDialog } from '@angular/material/dialog';
import { checklistItemLabels, clinicalCaution, type BookingView } from '@emberline/shared';
import { buttonNamed, element, textOf } from '../../testing/dom';
import { ChecklistPanel } from './checklist-panel';

// Invented demo booking. The INR limit of 1.5 is common practice for percutaneous liver
// ablation (from memory; the local protocol decides).
const threshold = {
  key: 'inr-max' as const,
  label: 'Highest INR accepted',
  value: 1.5,
  unit: '',
  source: 'Local protocol (demo)',
  updatedBy: null,
  updatedAt: '2026-11-01T08:00:00.000Z',
};

function booking(isComplete: boolean, inrState: 'not-met' | 'overridden' = 'not-met'): BookingView {
  return {
    id: 'b7c6d5e4-f3a2-4b1c-8d0e-9f8a7b6c5d4e',
    caseId: 'case-1',
    kind: 'procedure',
    state: 'booked',
    startsAt: '2027-03-15T08:30:00.000Z',
    durationMin: 120,
    room: 'Interventional suite 2',
    operator: { id: 'operator-1', displayName: 'Dr Okafor' },
    anaesthesia: 'general',
    modality: null,
    applicators: [],
    notes: null,
    sequence: 0,
    bookedBy: { id: 'coordinator-1', displayName: 'Nurse Amadi' },
    checklist: {
      isComplete,
      items: [
        {
          key: 'consent',
          label: checklistItemLabels.consent,
          state: isComplete ? 'met' : 'open',
          finding: null,
          threshold: null,
          checkedBy: null,
          checkedAt: null,
          override: null,
        },
        {
          key: 'inr',
          label: checklistItemLabels.inr,
          state: inrState,
          finding: 'INR 1.8 on 2027-03-10',
          threshold,
          checkedBy: null,
          checkedAt: null,
          override:
            inrState === 'overridden'
              ? {
                  reason: 'Vitamin K given; repeat INR on the morning',
                  by: { id: 'coordinator-1', displayName: 'Nurse Amadi' },
                  at: '2027-03-12T10:00:00.000Z',
                }
              : null,
        },
      ],
    },
    history: [],
    notifications: [],
    isMailEnabled: true,
    permissions: { canEdit: true, canCheck: true, canConfirm: true, canMarkDone: false },
  };
}

describe('ChecklistPanel', () => {
  let fixture: ComponentFixture<ChecklistPanel>;
  let http: HttpTestingController;
  let changes: number;
  let dialog: MatDialog;
  const bookingUrl = `/api/bookings/${booking(false).id}`;

  async function open(value: BookingView): Promise<void> {
    TestBed.configureTestingModule({
      imports: [ChecklistPanel],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
      ],
    });
    http = TestBed.inject(HttpTestingController);
    dialog = TestBed.inject(MatDialog);
    fixture = TestBed.createComponent(ChecklistPanel);
    fixture.componentRef.setInput('booking', value);
    changes = 0;
    fixture.componentInstance.changed.subscribe(() => changes++);
    await fixture.whenStable();
  }

  afterEach(() => {
    dialog.closeAll();
    http.verify();
  });

  function confirmButton(): HTMLButtonElement {
    return element<HTMLButtonElement>(fixture, '[data-confirm-booking]');
  }

  /** The dialog opens in the overlay container, outside the fixture. */
  function overlay(selector: string): HTMLElement {
    const found = document.querySelector<HTMLElement>(`.cdk-overlay-container ${selector}`);
    if (!found) throw new Error(`Nothing in the overlay matches ${selector}`);
    return found;
  }

  it('shows the finding, the threshold with its source, and the caution', async () => {
    await open(booking(false));
    const inr = element(fixture, '[data-checklist-item="inr"]').textContent ?? '';
    expect(inr).toContain('INR 1.8 on 2027-03-10');
    expect(inr).toContain('1.5');
    expect(inr).toContain('source: Local protocol (demo)');
    expect(textOf(fixture)).toContain('never replaces');
    expect(textOf(fixture)).toContain(clinicalCaution);
  });

  it('keeps "Confirm booking" disabled until every item is met or overridden', async () => {
    await open(booking(false));
    expect(confirmButton().disabled).toBe(true);
    expect(textOf(fixture)).toContain('Every item must be met or overridden first.');

    fixture.componentRef.setInput('booking', booking(true, 'overridden'));
    await fixture.whenStable();
    expect(confirmButton().disabled).toBe(false);
    expect(textOf(fixture)).toContain('Vitamin K given; repeat INR on the morning');
  });

  it('asks the reason of an override and sends nothing without one', async () => {
    await open(booking(false));
    buttonNamed(fixture, 'Override…').click();
    await fixture.whenStable();

    const form = overlay('form');
    form.dispatchEvent(new Event('submit', { bubbles: true, cancelable: true }));
    await fixture.whenStable();
    http.expectNone(`${bookingUrl}/checklist/inr/override`);
    expect(overlay('mat-error').textContent).toContain('Required');

    const reason = overlay('#reason-text') as HTMLTextAreaElement;
    reason.value = '  Vitamin K given; repeat INR on the morning  ';
    reason.dispatchEvent(new Event('input', { bubbles: true }));
    form.dispatchEvent(new Event('submit', { bubbles: true, cancelable: true }));
    const request = http.expectOne(`${bookingUrl}/checklist/inr/override`);
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({ reason: 'Vitamin K given; repeat INR on the morning' });
    request.flush({});
    // The dialog reports once its closing animation is over.
    await vi.waitFor(() => {
      expect(changes).toBe(1);
    });
  });

  it('ticks a manual item', async () => {
    await open(booking(false));
    const box = element<HTMLInputElement>(fixture, '[data-checklist-item="consent"] input');
    box.click();
    const request = http.expectOne(`${bookingUrl}/checklist/consent`);
    expect(request.request.method).toBe('PUT');
    expect(request.request.body).toEqual({ isMet: true });
    request.flush({});
    expect(changes).toBe(1);
  });

  it('shows the server’s refusal of a confirmation (409) in its words', async () => {
    await open(booking(true, 'overridden'));
    confirmButton().click();
    http.expectOne(`${bookingUrl}/confirm`).flush(
      {
        type: 'about:blank',
        title: 'Conflict',
        status: 409,
        detail: 'The checklist is not complete: consent is open.',
      },
      { status: 409, statusText: 'Conflict' },
    );
    await fixture.whenStable();
    expect(element(fixture, '[data-checklist-error]').textContent).toContain(
      'The checklist is not complete: consent is open.',
    );
    expect(changes).toBe(0);
  });
});
