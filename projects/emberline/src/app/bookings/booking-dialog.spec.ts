import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';
import { MatSelectHarness } from '@angular/material/select/testing';
import { anaesthesiaLabels, type BookingView } from '@emberline/shared';
import { element, submit, textOf, typeInto } from '../../testing/dom';
import { BookingDialog, type BookingDialogData } from './booking-dialog';

// Invented demo case, operator and booking.
const caseId = '5a4b3c2d-1e0f-4a9b-8c7d-6e5f4a3b2c1d';
const operator = { id: '11111111-2222-4333-8444-555555555555', displayName: 'Dr Okafor' };
const url = `/api/cases/${caseId}/booking`;

function problem(status: number, detail: string, errors?: unknown[]) {
  return [
    { type: 'about:blank', title: 'Refused', status, detail, ...(errors ? { errors } : {}) },
    { status, statusText: 'Refused' },
  ] as const;
}

const current: BookingView = {
  id: 'booking-1',
  caseId,
  kind: 'procedure',
  state: 'booked',
  startsAt: new Date(2027, 2, 15, 8, 30).toISOString(),
  durationMin: 120,
  room: 'Interventional suite 2',
  operator,
  anaesthesia: 'general',
  modality: null,
  applicators: [],
  notes: null,
  sequence: 0,
  bookedBy: { id: 'coordinator-1', displayName: 'Nurse Amadi' },
  checklist: null,
  history: [],
  notifications: [],
  isMailEnabled: true,
  permissions: { canEdit: true, canCheck: true, canConfirm: true, canMarkDone: false },
};

describe('BookingDialog', () => {
  let fixture: ComponentFixture<BookingDialog>;
  let http: HttpTestingController;
  let closedWith: unknown[];

  async function open(data: Partial<BookingDialogData>): Promise<void> {
    closedWith = [];
    TestBed.configureTestingModule({
      imports: [BookingDialog],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        {
          provide: MAT_DIALOG_DATA,
          useValue: {
            mode: 'procedure',
            caseId,
            caseCode: 'NLB-2027-003',
            operators: [operator],
            ...data,
          },
        },
        { provide: MatDialogRef, useValue: { close: (value: unknown) => closedWith.push(value) } },
      ],
    });
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(BookingDialog);
    await fixture.whenStable();
  }

  async function choose(id: string, label: string): Promise<void> {
    const harness = await TestbedHarnessEnvironment.loader(fixture).getHarness(
      MatSelectHarness.with({ selector: `#${id}` }),
    );
    await harness.open();
    await harness.clickOptions({ text: label });
    await fixture.whenStable();
  }

  async function fill(): Promise<void> {
    typeInto(fixture, '#booking-starts-at', '2027-03-15T08:30');
    typeInto(fixture, '#booking-room', '  Interventional suite 2  ');
    await choose('booking-operator', operator.displayName);
    await choose('booking-anaesthesia', anaesthesiaLabels.general);
  }

  function inputValue(selector: string): string {
    return element<HTMLInputElement>(fixture, selector).value;
  }

  afterEach(() => http.verify());

  it('sends the local start as ISO 8601 with the offset of that moment', async () => {
    await open({});
    await fill();
    submit(fixture);

    const request = http.expectOne(url);
    expect(request.request.method).toBe('POST');
    const body = request.request.body as Record<string, unknown>;
    // RFC 3339 date-time with a numeric offset; the instant is the local wall time typed
    // (ECMAScript: new Date(y, m, d, h, min) reads local time).
    expect(body['startsAt']).toMatch(/^2027-03-15T08:30:00[+-]\d{2}:\d{2}$/);
    expect(Date.parse(String(body['startsAt']))).toBe(new Date(2027, 2, 15, 8, 30).getTime());
    expect(body).toEqual({
      startsAt: body['startsAt'],
      durationMin: 120,
      room: 'Interventional suite 2',
      operatorId: operator.id,
      anaesthesia: 'general',
    });
    request.flush({}, { status: 201, statusText: 'Created' });
    expect(closedWith).toEqual([true]);
  });

  it('sends nothing without a start, a room, an operator and the anaesthesia', async () => {
    await open({});
    submit(fixture);
    await fixture.whenStable();
    http.expectNone(url);
    expect(textOf(fixture)).toContain('Required');
    expect(closedWith).toEqual([]);
  });

  it('shows a clash (409) in the dialog and keeps everything typed', async () => {
    await open({});
    await fill();
    typeInto(fixture, '#booking-notes', 'Bring the second generator.');
    submit(fixture);
    http
      .expectOne(url)
      .flush(...problem(409, 'Interventional suite 2 is booked from 08:00 to 10:00 that day.'));
    await fixture.whenStable();

    expect(element(fixture, '[data-booking-error]').textContent).toContain(
      'Interventional suite 2 is booked from 08:00 to 10:00 that day.',
    );
    expect(inputValue('#booking-starts-at')).toBe('2027-03-15T08:30');
    expect(inputValue('#booking-room')).toBe('  Interventional suite 2  ');
    expect(element<HTMLTextAreaElement>(fixture, '#booking-notes').value).toBe(
      'Bring the second generator.',
    );
    expect(closedWith).toEqual([]);
  });

  it('puts a field refused by the server (400) on its field', async () => {
    await open({});
    await fill();
    submit(fixture);
    http
      .expectOne(url)
      .flush(
        ...problem(400, 'durationMin: A booking lasts at most 12 hours', [
          { path: 'durationMin', message: 'A booking lasts at most 12 hours' },
        ]),
      );
    await fixture.whenStable();

    expect(textOf(fixture)).toContain('A booking lasts at most 12 hours');
    expect((fixture.nativeElement as HTMLElement).querySelector('[data-booking-error]')).toBeNull();
    expect(inputValue('#booking-room')).toBe('  Interventional suite 2  ');
  });

  it('rebooks with the changed fields only and the reason', async () => {
    await open({ mode: 'rebook', current });
    expect(inputValue('#booking-starts-at')).toBe('2027-03-15T08:30');
    typeInto(fixture, '#booking-room', 'Interventional suite 3');
    submit(fixture);
    await fixture.whenStable();
    // The reason is required for a rebooking.
    http.expectNone(url);

    typeInto(fixture, '#booking-reason', 'Suite 2 closed for maintenance');
    submit(fixture);
    const request = http.expectOne(url);
    expect(request.request.method).toBe('PATCH');
    expect(request.request.body).toEqual({
      room: 'Interventional suite 3',
      reason: 'Suite 2 closed for maintenance',
    });
    request.flush({});
    expect(closedWith).toEqual([true]);
  });
});
