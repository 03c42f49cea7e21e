import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { CaseDetail, LabPanelView, ProblemDetails } from '@emberline/shared';
import { element, submit, typeInto } from '../../testing/dom';
import { LabPanelForm } from './lab-panel-form';

const caseId = '3f9b2f6e-9a57-4a0f-8f8e-1c2d3e4f5a6b';

describe('LabPanelForm', () => {
  let fixture: ComponentFixture<LabPanelForm>;
  let http: HttpTestingController;

  function hint(name: 'bilirubin' | 'albumin' | 'creatinine'): string {
    return element(fixture, `#lab-${name}-conversion`).textContent?.trim() ?? '';
  }

  /** Clicks the toggle labelled `label` inside the element matching `scope`. */
  function toggle(scope: string, label: string): void {
    const buttons = Array.from(
      element(fixture, scope).querySelectorAll<HTMLButtonElement>('mat-button-toggle button'),
    );
    const button = buttons.find((candidate) => candidate.textContent?.trim() === label);
    if (!button) throw new Error(`No toggle ${label} in ${scope}`);
    button.click();
  }

  function errorIn(fieldId: string): string {
    const field = element(fixture, fieldId).closest('mat-form-field');
    return field?.querySelector('mat-error')?.textContent?.trim() ?? '';
  }

  async function fillValidPanel(): Promise<void> {
    typeInto(fixture, '#lab-taken-at', '2026-11-20');
    typeInto(fixture, '#lab-bilirubin', '34.2');
    typeInto(fixture, '#lab-albumin', '35');
    typeInto(fixture, '#lab-creatinine', '88.4');
    typeInto(fixture, '#lab-inr', '1.2');
    typeInto(fixture, '#lab-sodium', '138');
    typeInto(fixture, '#lab-platelets', '140');
    toggle('[aria-labelledby="lab-ascites-label"]', 'None');
    toggle('[aria-labelledby="lab-encephalopathy-label"]', 'None');
    await fixture.whenStable();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [LabPanelForm],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(LabPanelForm);
    fixture.componentRef.setInput('caseId', caseId);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  it('shows bilirubin typed in µmol/L in mg/dL, and in µmol/L once the unit is mg/dL', async () => {
    typeInto(fixture, '#lab-bilirubin', '34.2');
    await fixture.whenStable();
    // 34.2 µmol/L ÷ 17.1 = 2 mg/dL
    expect(hint('bilirubin')).toBe('= 2 mg/dL');

    toggle('[formgroupname="bilirubin"]', 'mg/dL');
    await fixture.whenStable();
    // 34.2 mg/dL × 17.1 = 584.82 µmol/L
    expect(hint('bilirubin')).toBe('= 584.8 µmol/L');
  });

  it('converts albumin and creatinine as they are typed', async () => {
    typeInto(fixture, '#lab-albumin', '35');
    typeInto(fixture, '#lab-creatinine', '176.8');
    await fixture.whenStable();

    expect(hint('albumin')).toBe('= 3.5 g/dL');
    expect(hint('creatinine')).toBe('= 2 mg/dL');

    toggle('[formgroupname="creatinine"]', 'mg/dL');
    typeInto(fixture, '#lab-creatinine', '1.5');
    await fixture.whenStable();
    expect(hint('creatinine')).toBe('= 133 µmol/L');
  });

  it('judges the plausible range by the unit chosen beside the value', async () => {
    typeInto(fixture, '#lab-bilirubin', '100');
    await fixture.whenStable();
    expect(errorIn('#lab-bilirubin')).toBe('');

    // 100 mg/dL is beyond the shared schema's 80 mg/dL, though 100 µmol/L is ordinary.
    toggle('[formgroupname="bilirubin"]', 'mg/dL');
    await fixture.whenStable();
    expect(errorIn('#lab-bilirubin')).toBe('Outside the plausible range');
  });

  it('puts the server’s field errors on the matching fields and keeps every value typed', async () => {
    await fillValidPanel();
    submit(fixture);

    const request = http.expectOne(`/api/cases/${caseId}/lab-panels`);
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({
      takenAt: '2026-11-20',
      bilirubin: { value: 34.2, unit: 'umol/L' },
      albumin: { value: 35, unit: 'g/L' },
      inr: 1.2,
      creatinine: { value: 88.4, unit: 'umol/L' },
      sodiumMmolL: 138,
      plateletsE9L: 140,
      ascites: 'none',
      encephalopathy: 'none',
      dialysisTwiceInPastWeek: false,
    });
    const refusal: ProblemDetails = {
      type: 'about:blank',
      title: 'Invalid request',
      status: 400,
      detail: 'inr: too high for this laboratory',
      errors: [
        { path: 'inr', message: 'too high for this laboratory' },
        { path: 'bilirubin.value', message: 'does not match the unit' },
      ],
    };
    request.flush(refusal, { status: 400, statusText: 'Bad Request' });
    await fixture.whenStable();

    expect(errorIn('#lab-inr')).toBe('Too high for this laboratory');
    expect(errorIn('#lab-bilirubin')).toBe('Does not match the unit');
    expect(element(fixture, '[role="alert"]').textContent).toContain('The panel was not added.');
    expect(element<HTMLInputElement>(fixture, '#lab-inr').value).toBe('1.2');
    expect(element<HTMLInputElement>(fixture, '#lab-bilirubin').value).toBe('34.2');
    expect(element<HTMLInputElement>(fixture, '#lab-platelets').value).toBe('140');
  });

  it('drops a server error from a field as soon as it is edited', async () => {
    await fillValidPanel();
    submit(fixture);
    http.expectOne(`/api/cases/${caseId}/lab-panels`).flush(
      {
        type: 'about:blank',
        title: 'Invalid request',
        status: 400,
        errors: [{ path: 'inr', message: 'too high' }],
      },
      { status: 400, statusText: 'Bad Request' },
    );
    await fixture.whenStable();
    expect(errorIn('#lab-inr')).toBe('Too high');

    typeInto(fixture, '#lab-inr', '1.1');
    await fixture.whenStable();
    expect(errorIn('#lab-inr')).toBe('');
  });

  it('does not send an incomplete panel and marks what is missing', async () => {
    typeInto(fixture, '#lab-bilirubin', '20');
    submit(fixture);
    await fixture.whenStable();

    http.expectNone(`/api/cases/${caseId}/lab-panels`);
    expect(errorIn('#lab-inr')).toBe('Required');
    expect(element(fixture, '[role="alert"]').textContent).toContain('Some values are missing');
  });

  it('announces the saved case and empties the values, keeping the units', async () => {
    const saved: CaseDetail[] = [];
    fixture.componentInstance.saved.subscribe((detail) => saved.push(detail));
    await fillValidPanel();
    toggle('[formgroupname="albumin"]', 'g/dL');
    typeInto(fixture, '#lab-albumin', '3.5');
    await fixture.whenStable();
    submit(fixture);

    const request = http.expectOne(`/api/cases/${caseId}/lab-panels`);
    expect(request.request.body.albumin).toEqual({ value: 3.5, unit: 'g/dL' });
    request.flush({ id: caseId } as CaseDetail, { status: 201, statusText: 'Created' });
    await fixture.whenStable();

    expect(saved).toEqual([{ id: caseId }]);
    expect(element<HTMLInputElement>(fixture, '#lab-albumin').value).toBe('');
    expect(hint('albumin')).toBe('');
    typeInto(fixture, '#lab-albumin', '4');
    await fixture.whenStable();
    expect(hint('albumin')).toBe('= 40 g/L');
  });

  describe('correcting a panel', () => {
    const original: LabPanelView = {
      id: 'b0000000-0000-4000-8000-000000000009',
      takenAt: '2026-11-18T07:30:00.000Z',
      bilirubin: { value: 25.65, unit: 'umol/L' },
      albumin: { value: 3.0, unit: 'g/dL' },
      inr: 1.1,
      creatinine: { value: 2.7, unit: 'mg/dL' },
      sodiumMmolL: 135,
      plateletsE9L: 120,
      ascites: 'mild',
      encephalopathy: 'none',
      dialysisTwiceInPastWeek: false,
      enteredBy: 'Dr Priya Raman',
      createdAt: '2026-11-18T09:00:00.000Z',
    };

    beforeEach(async () => {
      fixture.componentRef.setInput('correcting', original);
      await fixture.whenStable();
    });

    it('is prefilled with the panel as entered, units included', () => {
      expect(element(fixture, '#lab-form-title').textContent).toContain('Correct the panel');
      expect(element<HTMLInputElement>(fixture, '#lab-bilirubin').value).toBe('25.65');
      expect(element<HTMLInputElement>(fixture, '#lab-creatinine').value).toBe('2.7');
      // 25.65 µmol/L ÷ 17.1 = 1.5 mg/dL: the unit came with the value.
      expect(hint('bilirubin')).toBe('= 1.5 mg/dL');
    });

    it('asks for the reason before sending anything', async () => {
      submit(fixture);
      await fixture.whenStable();
      http.expectNone(`/api/cases/${caseId}/lab-panels/${original.id}/correction`);
      expect(errorIn('#lab-correction-reason')).not.toBe('');
    });

    it('sends the whole corrected panel with the reason, keeping the time of an unchanged day', async () => {
      const saved: CaseDetail[] = [];
      fixture.componentInstance.saved.subscribe((detail) => saved.push(detail));
      typeInto(fixture, '#lab-creatinine', '1.4');
      typeInto(fixture, '#lab-correction-reason', 'Creatinine of another day');
      await fixture.whenStable();
      submit(fixture);

      const request = http.expectOne(`/api/cases/${caseId}/lab-panels/${original.id}/correction`);
      expect(request.request.method).toBe('POST');
      expect(request.request.body).toEqual({
        takenAt: original.takenAt,
        bilirubin: { value: 25.65, unit: 'umol/L' },
        albumin: { value: 3.0, unit: 'g/dL' },
        inr: 1.1,
        creatinine: { value: 1.4, unit: 'mg/dL' },
        sodiumMmolL: 135,
        plateletsE9L: 120,
        ascites: 'mild',
        encephalopathy: 'none',
        dialysisTwiceInPastWeek: false,
        reason: 'Creatinine of another day',
      });
      request.flush({ id: caseId } as CaseDetail, { status: 201, statusText: 'Created' });
      await fixture.whenStable();
      expect(saved).toEqual([{ id: caseId }]);
    });
  });
});
