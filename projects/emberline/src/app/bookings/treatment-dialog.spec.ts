import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';
import { MatSelectHarness } from '@angular/material/select/testing';
import { complicationGradeLabels } from '@emberline/shared';
import { element, submit, textOf, typeInto } from '../../testing/dom';
import { TreatmentDialog, type TreatmentDialogData } from './treatment-dialog';

// Invented demo case and applicator.
const caseId = '6b5c4d3e-2f10-4b0a-9d8e-7f6a5b4c3d2e';
const url = `/api/cases/${caseId}/treatment`;
const data: TreatmentDialogData = {
  caseId,
  caseCode: 'NLB-2027-004',
  startsAt: new Date(2026, 3, 2, 9, 0).toISOString(),
  applicators: [{ name: 'Demo MW 14G', version: 2 }],
};

describe('TreatmentDialog', () => {
  let fixture: ComponentFixture<TreatmentDialog>;
  let http: HttpTestingController;
  let closedWith: unknown[];

  async function open(dialogData: TreatmentDialogData): Promise<void> {
    closedWith = [];
    TestBed.configureTestingModule({
      imports: [TreatmentDialog],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: MAT_DIALOG_DATA, useValue: dialogData },
        { provide: MatDialogRef, useValue: { close: (value: unknown) => closedWith.push(value) } },
      ],
    });
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(TreatmentDialog);
    await fixture.whenStable();
  }

  beforeEach(() => open(data));

  afterEach(() => http.verify());

  async function grade(label: string): Promise<void> {
    const harness = await TestbedHarnessEnvironment.loader(fixture).getHarness(
      MatSelectHarness.with({ selector: '#treatment-grade' }),
    );
    await harness.open();
    await harness.clickOptions({ text: label });
    await fixture.whenStable();
  }

  it('starts from the booked start and the plan’s applicators, and names the classification', () => {
    expect(element<HTMLInputElement>(fixture, '#treatment-performed-at').value).toBe(
      '2026-04-02T09:00',
    );
    expect(element<HTMLTextAreaElement>(fixture, '#treatment-applicators').value).toBe(
      'Demo MW 14G (v2)',
    );
    expect(textOf(fixture)).toContain('Clavien–Dindo');
  });

  it('starts from now when the booked start is still ahead (a procedure is recorded once done)', async () => {
    fixture.destroy();
    TestBed.resetTestingModule();
    const before = new Date();
    before.setSeconds(0, 0);
    await open({ ...data, startsAt: new Date(Date.now() + 7 * 86_400_000).toISOString() });
    const shown = element<HTMLInputElement>(fixture, '#treatment-performed-at').value;
    const shownAt = new Date(shown).getTime();
    expect(shownAt).toBeGreaterThanOrEqual(before.getTime());
    expect(shownAt).toBeLessThanOrEqual(Date.now());
  });

  it('sends a procedure without complication as none, with no note', async () => {
    submit(fixture);
    const request = http.expectOne(url);
    const body = request.request.body as Record<string, unknown>;
    expect(Date.parse(String(body['performedAt']))).toBe(new Date(2026, 3, 2, 9, 0).getTime());
    expect(body).toEqual({
      performedAt: body['performedAt'],
      applicatorsUsed: 'Demo MW 14G (v2)',
      complicationGrade: 'none',
    });
    request.flush({}, { status: 201, statusText: 'Created' });
    expect(closedWith).toEqual([true]);
  });

  it('requires a note once a complication is graded', async () => {
    // Clavien–Dindo grade II: treated with medicines beyond the simple measures (Dindo et al.,
    // Ann Surg 2004).
    await grade(complicationGradeLabels.II);
    submit(fixture);
    await fixture.whenStable();
    http.expectNone(url);
    const noteField = element(fixture, '#treatment-complication-note').closest('mat-form-field');
    expect(noteField?.querySelector('mat-error')?.textContent).toContain(
      'Describe the complication',
    );

    typeInto(fixture, '#treatment-complication-note', 'Post-ablation fever, oral antibiotics.');
    submit(fixture);
    const request = http.expectOne(url);
    expect(request.request.body).toMatchObject({
      complicationGrade: 'II',
      complicationNote: 'Post-ablation fever, oral antibiotics.',
    });
    request.flush({});
    expect(closedWith).toEqual([true]);
  });

  it('lets the note go again when the grade goes back to none', async () => {
    await grade(complicationGradeLabels.IIIa);
    await grade(complicationGradeLabels.none);
    submit(fixture);
    http.expectOne(url).flush({});
    expect(closedWith).toEqual([true]);
  });
});
