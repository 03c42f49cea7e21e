import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';
import {
  safetyProfileBodySchema,
  type ProblemDetails,
  type SafetyProfileView,
} from '@emberline/shared';
import { element, submit, typeInto } from '../../testing/dom';
import { SafetyProfileDialog, type SafetyProfileDialogData } from './safety-profile-dialog';

const profileId = '9c1d2e3f-4a5b-4c6d-8e7f-0a1b2c3d4e5f';

// Fixture values: margin 5 mm minimum / 10 mm ideal and heat sink ≥ 3 mm within ~10 mm are the
// common practice (margin: Wang X et al., Cardiovasc Intervent Radiol 2013; heat sink: Lu DSK et
// al., AJR 2002; "within 10 mm" a project default); the rest is invented for the test.
const defaultProfile: SafetyProfileView = {
  id: profileId,
  name: 'Demo thresholds',
  structureRules: [
    { kind: 'gallbladder', minimumClearanceMm: 10, isCritical: true, source: 'Common practice' },
    { kind: 'bowel', minimumClearanceMm: 10, isCritical: true, source: 'Common practice' },
  ],
  marginTargetMm: 10,
  marginTargetSource: 'Common practice: 10 mm ideal',
  marginMinimumMm: 5,
  marginMinimumSource: 'Common practice: at least 5 mm',
  heatSinkDiameterMm: 3,
  heatSinkDistanceMm: 10,
  heatSinkKinds: ['portal-vein', 'hepatic-vein'],
  heatSinkSource: 'Common practice: vessels of 3 mm or more within about 10 mm',
  maximumAngulationDeg: 60,
  angulationSource: 'Invented for the test',
  minimumParenchymaBeforeTumourMm: 10,
  parenchymaSource: 'Invented for the test',
  maximumCapsuleCrossings: 1,
  capsuleSource: 'Invented for the test',
  physicsToleranceMm: 2,
  physicsToleranceSource: 'Invented for the test',
  rehearsalToleranceMm: 2,
  rehearsalToleranceSource: 'Invented for the test',
  isDefault: true,
  version: 2,
  createdAt: '2026-11-30T09:00:00.000Z',
  updatedAt: '2026-11-30T09:00:00.000Z',
};

/** The view without what the body schema leaves out. */
function bodyFields(profile: SafetyProfileView): Partial<SafetyProfileView> {
  const fields: Partial<SafetyProfileView> = { ...profile };
  delete fields.id;
  delete fields.createdAt;
  delete fields.updatedAt;
  delete fields.isDefault;
  delete fields.version;
  return fields;
}

describe('SafetyProfileDialog', () => {
  let fixture: ComponentFixture<SafetyProfileDialog>;
  let http: HttpTestingController;
  let close: ReturnType<typeof vi.fn>;

  async function open(data: SafetyProfileDialogData): Promise<void> {
    close = vi.fn();
    await TestBed.configureTestingModule({
      imports: [SafetyProfileDialog],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: MAT_DIALOG_DATA, useValue: data },
        { provide: MatDialogRef, useValue: { close } },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(SafetyProfileDialog);
    await fixture.whenStable();
  }

  function errorIn(fieldId: string): string {
    const field = element(fixture, fieldId).closest('mat-form-field');
    return field?.querySelector('mat-error')?.textContent?.trim() ?? '';
  }

  /** The options of the mat-select matching `selector`, opened. */
  async function optionsOf(selector: string): Promise<HTMLElement[]> {
    const select = element(fixture, selector);
    element(fixture, `${selector} .mat-mdc-select-trigger`).click();
    await fixture.whenStable();
    const panel = document.getElementById(select.getAttribute('aria-controls') ?? '');
    if (!panel) throw new Error(`The select ${selector} did not open`);
    return Array.from(panel.querySelectorAll<HTMLElement>('mat-option'));
  }

  afterEach(() => http.verify());

  it('starts a new profile from the default’s values and creates it with the name typed', async () => {
    await open({ profile: null, startFrom: defaultProfile });
    typeInto(fixture, '#safety-name', 'Stricter thresholds');
    typeInto(fixture, '#safety-marginTargetMm', '12');
    await fixture.whenStable();
    submit(fixture);

    const request = http.expectOne('/api/admin/safety-profiles');
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({
      ...bodyFields(defaultProfile),
      name: 'Stricter thresholds',
      marginTargetMm: 12,
    });
    // What the browser sends is what the server's shared schema accepts.
    expect(safetyProfileBodySchema.safeParse(request.request.body).success).toBe(true);
    request.flush({ ...defaultProfile, id: 'new', name: 'Stricter thresholds', isDefault: false });
    expect(close).toHaveBeenCalled();
  });

  it('saves the physics zone tolerance and its source with a PATCH', async () => {
    await open({ profile: defaultProfile, startFrom: null });
    typeInto(fixture, '#safety-physicsToleranceMm', '1.5');
    typeInto(fixture, '#safety-physicsToleranceSource', 'Invented team choice for the test');
    await fixture.whenStable();
    submit(fixture);

    const request = http.expectOne(`/api/admin/safety-profiles/${profileId}`);
    expect(request.request.method).toBe('PATCH');
    expect(request.request.body).toEqual({
      ...bodyFields(defaultProfile),
      physicsToleranceMm: 1.5,
      physicsToleranceSource: 'Invented team choice for the test',
    });
    expect(safetyProfileBodySchema.partial().safeParse(request.request.body).success).toBe(true);
    const saved = { ...defaultProfile, ...request.request.body, version: 3 };
    request.flush(saved);
    expect(close).toHaveBeenCalledWith(saved);
  });

  it('refuses a physics zone tolerance beyond 20 mm before sending', async () => {
    await open({ profile: defaultProfile, startFrom: null });
    typeInto(fixture, '#safety-physicsToleranceMm', '25');
    await fixture.whenStable();
    submit(fixture);
    await fixture.whenStable();

    // Bound of the shared safetyProfileBodySchema: physics tolerance 0–20 mm.
    expect(errorIn('#safety-physicsToleranceMm')).toBe('At most 20');
    http.expectNone(`/api/admin/safety-profiles/${profileId}`);
  });

  it('offers the shared schema’s default tolerance and source to a profile started from nothing', async () => {
    await open({ profile: null, startFrom: null });

    const shape = safetyProfileBodySchema.shape;
    expect(Number(element<HTMLInputElement>(fixture, '#safety-physicsToleranceMm').value)).toBe(
      shape.physicsToleranceMm.parse(undefined),
    );
    expect(element<HTMLInputElement>(fixture, '#safety-physicsToleranceSource').value).toBe(
      shape.physicsToleranceSource.parse(undefined),
    );
  });

  it('says which version is edited and that a used version is kept by its assessments', async () => {
    await open({ profile: defaultProfile, startFrom: null });

    const note = element(fixture, '#profile-version-note').textContent?.replace(/\s+/g, ' ');
    expect(note).toContain('Version 2.');
    expect(note).toContain('creates version 3');
    expect(note).toContain('the earlier assessments keep version 2');
  });

  it('puts the server’s 400 on the rule and the threshold source it names', async () => {
    await open({ profile: defaultProfile, startFrom: null });
    submit(fixture);

    const request = http.expectOne(`/api/admin/safety-profiles/${profileId}`);
    expect(request.request.method).toBe('PATCH');
    // The default stays the default without saying so: isDefault is left out.
    expect(request.request.body).not.toHaveProperty('isDefault');
    const refusal: ProblemDetails = {
      type: 'about:blank',
      title: 'Invalid request',
      status: 400,
      detail: 'structureRules.1.minimumClearanceMm: Number must be at most 100',
      errors: [
        { path: 'structureRules.1.minimumClearanceMm', message: 'too far for this profile' },
        { path: 'structureRules.0.kind', message: 'gallbladder appears twice' },
        { path: 'marginTargetSource', message: 'Say where the value comes from' },
      ],
    };
    request.flush(refusal, { status: 400, statusText: 'Bad Request' });
    await fixture.whenStable();

    expect(errorIn('#rule-1-clearance')).toBe('Too far for this profile');
    expect(errorIn('#rule-0-kind')).toBe('Gallbladder appears twice');
    expect(errorIn('#safety-marginTargetSource')).toBe('Say where the value comes from');
    expect(element(fixture, '#profile-error').textContent).toContain('The profile was not saved.');
    expect(element<HTMLInputElement>(fixture, '#rule-1-clearance').value).toBe('10');
    expect(close).not.toHaveBeenCalled();
  });

  it('refuses a margin target above 30 mm and a threshold without its source before sending', async () => {
    await open({ profile: defaultProfile, startFrom: null });
    typeInto(fixture, '#safety-marginTargetMm', '31');
    typeInto(fixture, '#safety-angulationSource', '');
    typeInto(fixture, '#rule-0-clearance', '-1');
    await fixture.whenStable();
    submit(fixture);
    await fixture.whenStable();

    // Bounds of the shared safetyProfileBodySchema: margin target 0–30 mm, clearance 0–100 mm.
    expect(errorIn('#safety-marginTargetMm')).toBe('At most 30');
    expect(errorIn('#safety-angulationSource')).toBe('Required');
    expect(errorIn('#rule-0-clearance')).toBe('At least 0');
    http.expectNone(`/api/admin/safety-profiles/${profileId}`);
  });

  it('adds a rule for the first kind without one and offers no kind twice', async () => {
    await open({ profile: defaultProfile, startFrom: null });
    element(fixture, '.add-rule').click();
    await fixture.whenStable();

    // structureKinds order: tumour is the first kind without a rule.
    expect(element(fixture, '#rule-2-kind').textContent).toContain('Tumour');
    const options = await optionsOf('#rule-2-kind');
    const gallbladder = options.find((option) => option.textContent?.trim() === 'Gallbladder');
    expect(gallbladder?.getAttribute('aria-disabled')).toBe('true');
    const tumour = options.find((option) => option.textContent?.trim() === 'Tumour');
    expect(tumour?.getAttribute('aria-disabled')).toBe('false');
  });

  it('makes an edited profile the default only when asked', async () => {
    await open({ profile: { ...defaultProfile, isDefault: false }, startFrom: null });
    element<HTMLInputElement>(fixture, '#safety-isDefault input').click();
    await fixture.whenStable();
    submit(fixture);

    const request = http.expectOne(`/api/admin/safety-profiles/${profileId}`);
    expect(request.request.body).toMatchObject({ isDefault: true });
    request.flush({ ...defaultProfile });
  });

  it('keeps the default’s box ticked and locked', async () => {
    await open({ profile: defaultProfile, startFrom: null });

    const box = element<HTMLInputElement>(fixture, '#safety-isDefault input');
    expect(box.checked).toBe(true);
    expect(box.disabled).toBe(true);
  });
});
