import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';
import {
  createApplicatorProfileSchema,
  updateApplicatorProfileSchema,
  type ApplicatorProfileView,
  type ProblemDetails,
} from '@emberline/shared';
import { element, submit, typeInto } from '../../testing/dom';
import {
  ApplicatorProfileDialog,
  type ApplicatorProfileDialogData,
} from './applicator-profile-dialog';

const profileId = '5b8f1c2e-3d4a-4e6f-9a0b-1c2d3e4f5a6b';

// An invented profile for the tests: no real applicator's data.
const profile: ApplicatorProfileView = {
  id: profileId,
  name: 'Demo microwave 17 G',
  modality: 'microwave',
  gaugeG: 17,
  workingLengthMm: 200,
  activeLengthMm: 20,
  zoneTable: [
    { powerW: 60, timeS: 300, zoneLengthMm: 30, zoneWidthMm: 22, tipOffsetMm: 4 },
    { powerW: 60, timeS: 600, zoneLengthMm: 40, zoneWidthMm: 30, tipOffsetMm: 5 },
  ],
  zoneTableSource: 'ex-vivo',
  zoneTableReference: 'Invented bench series for the tests',
  version: 3,
  notes: 'Invented values for the demo.',
  isRetired: false,
  createdAt: '2026-11-30T09:00:00.000Z',
  updatedAt: '2026-11-30T09:00:00.000Z',
};

describe('ApplicatorProfileDialog', () => {
  let fixture: ComponentFixture<ApplicatorProfileDialog>;
  let http: HttpTestingController;
  let close: ReturnType<typeof vi.fn>;

  async function open(data: ApplicatorProfileDialogData): Promise<void> {
    close = vi.fn();
    await TestBed.configureTestingModule({
      imports: [ApplicatorProfileDialog],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: MAT_DIALOG_DATA, useValue: data },
        { provide: MatDialogRef, useValue: { close } },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(ApplicatorProfileDialog);
    await fixture.whenStable();
  }

  function errorIn(fieldId: string): string {
    const field = element(fixture, fieldId).closest('mat-form-field');
    return field?.querySelector('mat-error')?.textContent?.trim() ?? '';
  }

  /** Opens the mat-select matching `selector` and clicks the option named `label`. */
  async function pick(selector: string, label: string): Promise<void> {
    const select = element(fixture, selector);
    element(fixture, `${selector} .mat-mdc-select-trigger`).click();
    await fixture.whenStable();
    const panel = document.getElementById(select.getAttribute('aria-controls') ?? '');
    if (!panel) throw new Error(`The select ${selector} did not open`);
    const options = Array.from(panel.querySelectorAll<HTMLElement>('mat-option'));
    const option = options.find((candidate) => candidate.textContent?.trim() === label);
    if (!option) throw new Error(`No option ${label}`);
    option.click();
    await fixture.whenStable();
  }

  afterEach(() => http.verify());

  it('creates a profile with the fields and the zone table as typed', async () => {
    await open({ profile: null });
    typeInto(fixture, '#applicator-name', 'Demo radiofrequency 15 G');
    await pick('#applicator-modality', 'Radiofrequency (RFA)');
    typeInto(fixture, '#applicator-gauge', '15');
    typeInto(fixture, '#applicator-working-length', '150');
    typeInto(fixture, '#applicator-active-length', '30');
    typeInto(fixture, '#zone-0-powerW', '100');
    typeInto(fixture, '#zone-0-timeS', '720');
    typeInto(fixture, '#zone-0-zoneLengthMm', '35');
    typeInto(fixture, '#zone-0-zoneWidthMm', '30');
    typeInto(fixture, '#zone-0-tipOffsetMm', '10');
    await pick('#applicator-zone-table-source', "Manufacturer's data");
    await fixture.whenStable();
    submit(fixture);

    const request = http.expectOne('/api/admin/applicator-profiles');
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({
      name: 'Demo radiofrequency 15 G',
      modality: 'radiofrequency',
      gaugeG: 15,
      workingLengthMm: 150,
      activeLengthMm: 30,
      zoneTable: [{ powerW: 100, timeS: 720, zoneLengthMm: 35, zoneWidthMm: 30, tipOffsetMm: 10 }],
      zoneTableSource: 'manufacturer',
    });
    // Optional texts left empty are not sent.
    expect(request.request.body).not.toHaveProperty('notes');
    expect(request.request.body).not.toHaveProperty('zoneTableReference');
    // What the browser sends is what the server's shared schema accepts.
    expect(createApplicatorProfileSchema.safeParse(request.request.body).success).toBe(true);
    const created: ApplicatorProfileView = { ...profile, ...request.request.body, id: 'new-id' };
    request.flush(created, { status: 201, statusText: 'Created' });
    expect(close).toHaveBeenCalledWith(created);
  });

  it('edits with a PATCH of every field, the zone table’s source and reference included', async () => {
    await open({ profile });
    await pick('#applicator-zone-table-source', 'In vivo measurements');
    typeInto(fixture, '#applicator-zone-table-reference', 'Invented in vivo series, 2026');
    await fixture.whenStable();
    submit(fixture);

    const request = http.expectOne(`/api/admin/applicator-profiles/${profileId}`);
    expect(request.request.method).toBe('PATCH');
    expect(request.request.body).toEqual({
      name: profile.name,
      modality: profile.modality,
      gaugeG: profile.gaugeG,
      workingLengthMm: profile.workingLengthMm,
      activeLengthMm: profile.activeLengthMm,
      zoneTable: profile.zoneTable,
      zoneTableSource: 'in-vivo',
      zoneTableReference: 'Invented in vivo series, 2026',
      notes: profile.notes,
    });
    expect(updateApplicatorProfileSchema.safeParse(request.request.body).success).toBe(true);
    const saved: ApplicatorProfileView = { ...profile, ...request.request.body, version: 4 };
    request.flush(saved);
    expect(close).toHaveBeenCalledWith(saved);
  });

  it('says which version is edited and that a used version is kept by its assessments', async () => {
    await open({ profile });

    const note = element(fixture, '#profile-version-note').textContent?.replace(/\s+/g, ' ');
    expect(note).toContain('Version 3.');
    expect(note).toContain('creates version 4');
    expect(note).toContain('the earlier assessments keep version 3');
  });

  it('clears a reference the profile had by sending it empty', async () => {
    await open({ profile });
    typeInto(fixture, '#applicator-zone-table-reference', '');
    await fixture.whenStable();
    submit(fixture);

    const request = http.expectOne(`/api/admin/applicator-profiles/${profileId}`);
    expect(request.request.body).toMatchObject({ zoneTableReference: '' });
    request.flush(profile);
  });

  it('refuses a new profile that does not say where its zone table comes from', async () => {
    await open({ profile: null });
    typeInto(fixture, '#applicator-name', 'Demo radiofrequency 15 G');
    await pick('#applicator-modality', 'Radiofrequency (RFA)');
    typeInto(fixture, '#applicator-gauge', '15');
    typeInto(fixture, '#applicator-working-length', '150');
    typeInto(fixture, '#applicator-active-length', '30');
    for (const [column, value] of [
      ['powerW', '100'],
      ['timeS', '720'],
      ['zoneLengthMm', '35'],
      ['zoneWidthMm', '30'],
      ['tipOffsetMm', '10'],
    ]) {
      typeInto(fixture, `#zone-0-${column}`, value);
    }
    await fixture.whenStable();
    submit(fixture);
    await fixture.whenStable();

    // zoneTableSource is required by the shared createApplicatorProfileSchema.
    expect(errorIn('#applicator-zone-table-source')).toBe('Required');
    expect(element(fixture, '#profile-version-note').textContent).toContain(
      'A new profile starts at version 1.',
    );
    http.expectNone('/api/admin/applicator-profiles');
  });

  it('puts the server’s 400 on the cell, the row and the field it names and keeps the values', async () => {
    await open({ profile });
    submit(fixture);

    const request = http.expectOne(`/api/admin/applicator-profiles/${profileId}`);
    expect(request.request.method).toBe('PATCH');
    expect(request.request.body).toMatchObject({
      name: profile.name,
      zoneTable: profile.zoneTable,
    });
    const refusal: ProblemDetails = {
      type: 'about:blank',
      title: 'Invalid request',
      status: 400,
      detail: 'zoneTable.1.timeS: Time (s) must be at most 3600',
      errors: [
        { path: 'zoneTable.1.timeS', message: 'Time (s) must be at most 3600' },
        { path: 'zoneTable.0', message: 'The zone table holds 60 W for 300 s twice' },
        {
          path: 'activeLengthMm',
          message: 'The active length (20 mm) must be shorter than the working length (20 mm).',
        },
      ],
    };
    request.flush(refusal, { status: 400, statusText: 'Bad Request' });
    await fixture.whenStable();

    expect(errorIn('#zone-1-timeS')).toBe('Time (s) must be at most 3600');
    expect(element(fixture, '#zone-0-message').textContent?.trim()).toBe(
      'The zone table holds 60 W for 300 s twice',
    );
    expect(errorIn('#applicator-active-length')).toBe(
      'The active length (20 mm) must be shorter than the working length (20 mm).',
    );
    expect(element(fixture, '#profile-error').textContent).toContain('The profile was not saved.');
    expect(element<HTMLInputElement>(fixture, '#zone-1-timeS').value).toBe('600');
    expect(close).not.toHaveBeenCalled();
  });

  it('shows a name conflict (409, no field) in the dialog’s message', async () => {
    await open({ profile });
    submit(fixture);
    http.expectOne(`/api/admin/applicator-profiles/${profileId}`).flush(
      {
        type: 'about:blank',
        title: 'Conflict',
        status: 409,
        detail:
          'An applicator profile is called "Demo microwave 17 G" already; choose another name.',
      },
      { status: 409, statusText: 'Conflict' },
    );
    await fixture.whenStable();

    expect(element(fixture, '#profile-error').textContent).toContain('already; choose another');
  });

  it('refuses an active length not shorter than the working length before sending', async () => {
    await open({ profile });
    typeInto(fixture, '#applicator-working-length', '60');
    typeInto(fixture, '#applicator-active-length', '60');
    await fixture.whenStable();
    submit(fixture);
    await fixture.whenStable();

    // The shared createApplicatorProfileSchema's refinement, checked in the browser.
    expect(errorIn('#applicator-active-length')).toBe(
      'The active length must be shorter than the working length',
    );
    http.expectNone(`/api/admin/applicator-profiles/${profileId}`);

    typeInto(fixture, '#applicator-working-length', '150');
    await fixture.whenStable();
    expect(errorIn('#applicator-active-length')).toBe('');
  });

  it('refuses a gauge that is not a whole number within 10 to 25 G', async () => {
    await open({ profile });
    typeInto(fixture, '#applicator-gauge', '17.5');
    await fixture.whenStable();
    expect(errorIn('#applicator-gauge')).toBe('A whole number');

    typeInto(fixture, '#applicator-gauge', '9');
    await fixture.whenStable();
    expect(errorIn('#applicator-gauge')).toBe('At least 10');
  });
});
