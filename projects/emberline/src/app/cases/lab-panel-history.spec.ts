import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatDialog } from '@angular/material/dialog';
import type { CaseDetail, LabPanelView } from '@emberline/shared';
import { of } from 'rxjs';
import { textOf } from '../../testing/dom';
import type { ConfirmDialogData } from '../core/confirm-dialog';
import { LabPanelHistory } from './lab-panel-history';
import { caseDetailFixture } from './testing/case-detail-fixture';

const caseId = '9c1d2e3f-4a5b-4c6d-8e7f-0a1b2c3d4e5f';

/** An invented panel; the values do not matter here, only its place in the history. */
function panel(id: string, takenAt: string, overrides: Partial<LabPanelView> = {}): LabPanelView {
  return {
    id,
    takenAt,
    bilirubin: { value: 1.5, unit: 'mg/dL' },
    albumin: { value: 3.0, unit: 'g/dL' },
    inr: 1.1,
    creatinine: { value: 2.7, unit: 'mg/dL' },
    sodiumMmolL: 135,
    plateletsE9L: 120,
    ascites: 'mild',
    encephalopathy: 'none',
    dialysisTwiceInPastWeek: false,
    enteredBy: 'Dr Priya Raman',
    createdAt: takenAt,
    ...overrides,
  };
}

describe('LabPanelHistory', () => {
  let fixture: ComponentFixture<LabPanelHistory>;
  let http: HttpTestingController;
  let dialogData: ConfirmDialogData[];
  let dialogAnswer: unknown;

  const newest = panel('b0000000-0000-4000-8000-000000000002', '2026-11-20T08:00:00.000Z');
  const older = panel('b0000000-0000-4000-8000-000000000001', '2026-11-10T08:00:00.000Z');
  const superseded = panel('b0000000-0000-4000-8000-000000000003', '2026-11-25T08:00:00.000Z', {
    superseded: {
      reason: 'Creatinine typed from the wrong report',
      by: 'Dr Priya Raman',
      at: '2026-11-26T09:00:00.000Z',
      byPanelId: newest.id,
    },
  });

  beforeEach(async () => {
    dialogData = [];
    dialogAnswer = undefined;
    await TestBed.configureTestingModule({
      imports: [LabPanelHistory],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        {
          provide: MatDialog,
          useValue: {
            open: (_component: unknown, config: { data: ConfirmDialogData }) => {
              dialogData.push(config.data);
              return { afterClosed: () => of(dialogAnswer) };
            },
          },
        },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(LabPanelHistory);
    fixture.componentRef.setInput('caseId', caseId);
    fixture.componentRef.setInput('panels', [superseded, newest, older]);
    fixture.componentRef.setInput('canEdit', true);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  function rows(): HTMLTableRowElement[] {
    return Array.from((fixture.nativeElement as HTMLElement).querySelectorAll('tr[mat-row]'));
  }

  function button(label: string, row: HTMLTableRowElement): HTMLButtonElement | undefined {
    return Array.from(row.querySelectorAll('button')).find(
      (candidate) => candidate.textContent?.trim() === label,
    );
  }

  it('strikes a superseded panel through, with its reason, author and time, and offers no action on it', () => {
    const [supersededRow, newestRow] = rows();
    expect(supersededRow?.classList).toContain('retired');
    expect(supersededRow?.textContent).toContain('Superseded');
    expect(supersededRow?.textContent).toContain('Creatinine typed from the wrong report');
    expect(supersededRow?.textContent).toContain('Dr Priya Raman');
    expect(supersededRow?.textContent).toContain('26 Nov 2026');
    expect(supersededRow && button('Correct…', supersededRow)).toBeUndefined();
    // The newest panel by date is superseded: the next one is in force.
    expect(newestRow?.classList).not.toContain('retired');
    expect(newestRow?.textContent).toContain('In force');
  });

  it('hands the panel to correct to the form', () => {
    const corrected: LabPanelView[] = [];
    fixture.componentInstance.correct.subscribe((value) => corrected.push(value));
    const newestRow = rows()[1];
    if (!newestRow) throw new Error('no row');
    button('Correct…', newestRow)?.click();
    expect(corrected).toEqual([newest]);
  });

  it('asks for the reason before withdrawing, naming what follows, then posts it', async () => {
    const changed: CaseDetail[] = [];
    fixture.componentInstance.changed.subscribe((detail) => changed.push(detail));
    dialogAnswer = 'Sample of another patient';
    const newestRow = rows()[1];
    if (!newestRow) throw new Error('no row');
    button('Withdraw…', newestRow)?.click();

    const [data] = dialogData;
    expect(data?.reasonLabel).toBeTruthy();
    expect(data?.title).toContain('20 Nov 2026');
    // Withdrawing the panel in force puts the older one in force.
    expect(data?.items?.join(' ')).toContain('computed again from the panel taken 10 Nov 2026');
    const request = http.expectOne(`/api/cases/${caseId}/lab-panels/${newest.id}/withdrawal`);
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({ reason: 'Sample of another patient' });
    const detail = caseDetailFixture({ labPanels: [] });
    request.flush(detail);
    await fixture.whenStable();
    expect(changed).toEqual([detail]);
  });

  it('withdraws nothing when the confirmation is cancelled', () => {
    dialogAnswer = false;
    const olderRow = rows()[2];
    if (!olderRow) throw new Error('no row');
    button('Withdraw…', olderRow)?.click();
    expect(dialogData).toHaveLength(1);
    http.expectNone(`/api/cases/${caseId}/lab-panels/${older.id}/withdrawal`);
  });

  it('offers no action to someone who may not edit', async () => {
    fixture.componentRef.setInput('canEdit', false);
    await fixture.whenStable();
    expect(textOf(fixture)).not.toContain('Withdraw…');
    expect(textOf(fixture)).not.toContain('Correct…');
  });
});
