import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatSelectHarness } from '@angular/material/select/testing';
import { MatSortHeaderHarness } from '@angular/material/sort/testing';
import { provideRouter } from '@angular/router';
import { bookingUrgencyLabels, type BookingQueueItem } from '@emberline/shared';
import { textOf } from '../../testing/dom';
import { BookingQueue } from './booking-queue';
import { emptyQueueFilter, filterQueue, sortQueue } from './booking-queue-rows';

// Invented demo queue.
function item(overrides: Partial<BookingQueueItem> & { caseCode: string }): BookingQueueItem {
  return {
    caseId: `case-${overrides.caseCode}`,
    caseStatus: 'decided',
    board: { id: 'board-1', name: 'North liver board' },
    kind: 'procedure',
    outcome: 'ablation-mw',
    urgency: 'routine',
    decisionSignedAt: '2027-01-10T15:00:00.000Z',
    conditions: null,
    selectedPlan: null,
    booking: null,
    dueDate: null,
    ...overrides,
  };
}

const items: BookingQueueItem[] = [
  item({ caseCode: 'NLB-2027-001', decisionSignedAt: '2027-01-07T12:00:00.000Z' }),
  item({
    caseCode: 'NLB-2027-002',
    urgency: 'urgent',
    outcome: 'tace',
    conditions: 'Platelets above 50 on the day.',
    decisionSignedAt: '2027-01-12T12:00:00.000Z',
  }),
  item({
    caseCode: 'SLB-2027-003',
    board: { id: 'board-2', name: 'South liver board' },
    urgency: 'priority',
    kind: 'follow-up',
    caseStatus: 'treated',
    dueDate: '2027-02-20',
    decisionSignedAt: '2027-01-02T12:00:00.000Z',
  }),
  item({
    caseCode: 'NLB-2027-004',
    urgency: 'urgent',
    decisionSignedAt: '2027-01-01T12:00:00.000Z',
    booking: {
      id: 'booking-4',
      kind: 'procedure',
      state: 'booked',
      startsAt: '2027-01-20T08:00:00.000Z',
      durationMin: 90,
      room: 'Suite 1',
      operator: { id: 'op-1', displayName: 'Dr Okafor' },
    },
  }),
];

describe('booking queue rows', () => {
  it('puts the most urgent first by default, the longest waiting first among equals', () => {
    const rows = sortQueue(filterQueue(items, { ...emptyQueueFilter, showBooked: true }), {
      active: 'urgency',
      direction: 'desc',
    });
    expect(rows.map((row) => row.caseCode)).toEqual([
      'NLB-2027-004',
      'NLB-2027-002',
      'SLB-2027-003',
      'NLB-2027-001',
    ]);
  });

  it('leaves booked lines out unless asked, and filters by every field', () => {
    expect(filterQueue(items, emptyQueueFilter).map((row) => row.caseCode)).not.toContain(
      'NLB-2027-004',
    );
    const all = { ...emptyQueueFilter, showBooked: true };
    expect(filterQueue(items, { ...all, kind: 'follow-up' }).map((r) => r.caseCode)).toEqual([
      'SLB-2027-003',
    ]);
    expect(filterQueue(items, { ...all, boardId: 'board-2' })).toHaveLength(1);
    expect(filterQueue(items, { ...all, outcome: 'tace' }).map((r) => r.caseCode)).toEqual([
      'NLB-2027-002',
    ]);
    // Days are the browser's local days: decisions at noon UTC and a range two days clear of
    // them give the same answer in every time zone (offsets −12 to +14 hours).
    expect(
      filterQueue(items, { ...all, decidedFrom: '2027-01-05', decidedTo: '2027-01-09' }).map(
        (r) => r.caseCode,
      ),
    ).toEqual(['NLB-2027-001']);
  });
});

describe('BookingQueue', () => {
  let fixture: ComponentFixture<BookingQueue>;
  let http: HttpTestingController;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      imports: [BookingQueue],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
      ],
    });
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(BookingQueue);
    // Not whenStable: the queue's request stays pending until the test answers it.
    fixture.detectChanges();
  });

  afterEach(() => http.verify());

  function caseCodes(): string[] {
    return Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('[data-queue-row] td:first-child'),
    ).map((cell) => cell.textContent?.trim() ?? '');
  }

  async function load(body: BookingQueueItem[]): Promise<void> {
    http.expectOne('/api/bookings/queue?includeBooked=true').flush(body);
    await fixture.whenStable();
  }

  it('lists the waiting lines, most urgent first, with the conditions and a Book link', async () => {
    await load(items);
    expect(caseCodes()).toEqual(['NLB-2027-002', 'SLB-2027-003', 'NLB-2027-001']);
    expect(textOf(fixture)).toContain('Platelets above 50 on the day.');
    const book = (fixture.nativeElement as HTMLElement).querySelector<HTMLAnchorElement>(
      '[data-queue-row] a[mat-flat-button]',
    );
    expect(book?.textContent?.trim()).toBe('Book');
    expect(book?.getAttribute('href')).toBe('/cases/case-NLB-2027-002/logistics?book=procedure');
  });

  it('sorts by a column header, both ways', async () => {
    await load(items);
    const loader = TestbedHarnessEnvironment.loader(fixture);
    const header = await loader.getHarness(MatSortHeaderHarness.with({ label: 'Case' }));
    await header.click();
    expect(caseCodes()).toEqual(['NLB-2027-001', 'NLB-2027-002', 'SLB-2027-003']);
    await header.click();
    expect(caseCodes()).toEqual(['SLB-2027-003', 'NLB-2027-002', 'NLB-2027-001']);
  });

  it('filters by urgency and by kind, and says when nothing matches', async () => {
    await load(items);
    const loader = TestbedHarnessEnvironment.loader(fixture);
    const urgency = await loader.getHarness(MatSelectHarness.with({ selector: '#queue-urgency' }));
    await urgency.open();
    await urgency.clickOptions({ text: bookingUrgencyLabels.urgent });
    expect(caseCodes()).toEqual(['NLB-2027-002']);

    const kind = await loader.getHarness(MatSelectHarness.with({ selector: '#queue-kind' }));
    await kind.open();
    await kind.clickOptions({ text: 'Follow-up imaging' });
    expect(caseCodes()).toEqual([]);
    expect(textOf(fixture)).toContain('No line of the queue matches these filters.');
  });

  it('says when nothing waits, and shows a load error with a retry', async () => {
    await load([]);
    expect(textOf(fixture)).toContain('Nothing waits to be booked.');

    fixture.componentInstance['queue'].reload();
    TestBed.tick();
    http.expectOne('/api/bookings/queue?includeBooked=true').flush(
      {
        type: 'about:blank',
        title: 'Forbidden',
        status: 403,
        detail: 'Only nurse coordinators book.',
      },
      { status: 403, statusText: 'Forbidden' },
    );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain(
      'The queue could not be loaded: Only nurse coordinators book.',
    );
  });
});
