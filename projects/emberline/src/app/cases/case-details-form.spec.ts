import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { CaseDetail } from '@emberline/shared';
import { element, submit, textOf, typeInto } from '../../testing/dom';
import { CaseDetailsForm } from './case-details-form';
import { caseDetailFixture } from './testing/case-detail-fixture';

const detail: CaseDetail = caseDetailFixture();

describe('CaseDetailsForm', () => {
  let fixture: ComponentFixture<CaseDetailsForm>;
  let http: HttpTestingController;

  async function show(value: CaseDetail): Promise<void> {
    fixture.componentRef.setInput('detail', value);
    await fixture.whenStable();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [CaseDetailsForm],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(CaseDetailsForm);
    await show(detail);
  });

  afterEach(() => http.verify());

  it('sends only the fields that were changed', async () => {
    typeInto(fixture, '#details-year', '1959');
    submit(fixture);

    const patch = http.expectOne(`/api/cases/${detail.id}`);
    expect(patch.request.method).toBe('PATCH');
    expect(patch.request.body).toEqual({ yearOfBirth: 1959 });
    patch.flush({ ...detail, yearOfBirth: 1959 });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Saved.');
  });

  it('refuses a case code that breaks the shared rule before asking the server', async () => {
    typeInto(fixture, '#details-case-code', 'a b');
    submit(fixture);
    await fixture.whenStable();

    http.expectNone(`/api/cases/${detail.id}`);
    expect(element(fixture, 'mat-error').textContent?.trim()).toBe(
      '3–24 letters, digits or dashes',
    );
  });

  it('keeps unsaved typing when another part of the case file changes the case', async () => {
    typeInto(fixture, '#details-year', '1961');
    await show({
      ...detail,
      lesions: [{ id: 'l1', segment: 'VII', diameterMm: 24, kind: 'hcc' }],
      updatedAt: '2026-11-21T10:00:00.000Z',
    });

    expect(element<HTMLInputElement>(fixture, '#details-year').value).toBe('1961');
  });

  it('follows a changed case when nothing is being edited', async () => {
    await show({ ...detail, caseCode: 'NLB-2026-032' });
    expect(element<HTMLInputElement>(fixture, '#details-case-code').value).toBe('NLB-2026-032');
  });

  it('shows plain values, and no form, to those who may not edit the case', async () => {
    await show({
      ...detail,
      ecogPerformanceStatus: 1,
      hasVascularInvasion: false,
      permissions: { canEdit: false, canDelete: false, canAddLabPanel: false },
    });

    expect(fixture.nativeElement.querySelector('form')).toBeNull();
    const facts = Object.fromEntries(
      Array.from((fixture.nativeElement as HTMLElement).querySelectorAll('.facts > div')).map(
        (fact) => [
          fact.querySelector('dt')?.textContent?.trim(),
          fact.querySelector('dd')?.textContent?.trim(),
        ],
      ),
    );
    expect(facts).toMatchObject({
      'Case code': 'NLB-2026-031',
      'ECOG performance status': '1 · Light work only',
      'Vascular invasion': 'No',
      'Extrahepatic spread': 'Not recorded',
      Status: 'Draft',
    });
  });
});
