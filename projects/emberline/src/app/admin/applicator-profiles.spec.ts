import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { ApplicatorProfileView } from '@emberline/shared';
import axe from 'axe-core';
import { element, textOf } from '../../testing/dom';
import { ApplicatorProfiles } from './applicator-profiles';

const listUrl = '/api/admin/applicator-profiles';

// Invented profiles for the tests: no real applicator's data.
function profile(overrides: Partial<ApplicatorProfileView>): ApplicatorProfileView {
  return {
    id: 'profile-1',
    name: 'Demo microwave 17 G',
    modality: 'microwave',
    gaugeG: 17,
    workingLengthMm: 200,
    activeLengthMm: 20,
    zoneTable: [
      { powerW: 60, timeS: 300, zoneLengthMm: 30, zoneWidthMm: 22, tipOffsetMm: 4 },
      { powerW: 60, timeS: 600, zoneLengthMm: 40, zoneWidthMm: 30, tipOffsetMm: 5 },
    ],
    zoneTableSource: 'manufacturer',
    zoneTableReference: null,
    version: 1,
    notes: null,
    isRetired: false,
    createdAt: '2026-11-30T09:00:00.000Z',
    updatedAt: '2026-11-30T09:00:00.000Z',
    ...overrides,
  };
}

describe('ApplicatorProfiles', () => {
  let fixture: ComponentFixture<ApplicatorProfiles>;
  let http: HttpTestingController;

  async function open(profiles: ApplicatorProfileView[]): Promise<void> {
    // The list is a resource: whenStable would wait for it, so render once and answer it first.
    fixture.detectChanges();
    http.expectOne(listUrl).flush(profiles);
    await fixture.whenStable();
  }

  function rowOf(name: string): HTMLElement {
    const rows = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll<HTMLElement>('tr.mat-mdc-row'),
    );
    const row = rows.find((candidate) => candidate.textContent?.includes(name));
    if (!row) throw new Error(`No row for ${name}`);
    return row;
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [ApplicatorProfiles],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(ApplicatorProfiles);
  });

  afterEach(() => http.verify());

  it('lists each profile with its version, modality, gauge, lengths in mm and its zone table with its source', async () => {
    await open([
      profile({}),
      profile({
        id: 'profile-2',
        name: 'Demo radiofrequency 15 G',
        modality: 'radiofrequency',
        gaugeG: 15,
        workingLengthMm: 150,
        activeLengthMm: 30,
        zoneTable: [
          { powerW: 100, timeS: 720, zoneLengthMm: 35, zoneWidthMm: 30, tipOffsetMm: 10 },
        ],
        zoneTableSource: 'ex-vivo',
        zoneTableReference: 'Invented bench series',
        version: 3,
        isRetired: true,
      }),
    ]);

    const microwave = rowOf('Demo microwave 17 G').textContent?.replace(/\s+/g, ' ') ?? '';
    expect(microwave).toContain('Microwave (MWA)');
    expect(microwave).toContain('17 G');
    expect(microwave).toContain('200 / 20 mm');
    expect(microwave).toContain('version 1');
    expect(microwave).toContain("2 rows · Manufacturer's data");
    expect(microwave).toContain('In use');
    const radiofrequency = rowOf('Demo radiofrequency 15 G').textContent?.replace(/\s+/g, ' ');
    expect(radiofrequency).toContain('Radiofrequency (RFA)');
    expect(radiofrequency).toContain('version 3');
    expect(radiofrequency).toContain('1 row · Ex vivo measurements');
    expect(radiofrequency).toContain('Invented bench series');
    expect(radiofrequency).toContain('Retired');
    expect(radiofrequency).toContain('Return to use');
  });

  it('says beside the table that demo profiles are invented and tables come from the maker', async () => {
    await open([profile({})]);

    const text = textOf(fixture);
    expect(text).toContain('The demo profiles are invented values');
    expect(text).toContain("copied from the maker's published data");
    expect(text).toContain('The treating team decides, following local protocols');
  });

  it('retires a profile with a PATCH of isRetired and shows it retired', async () => {
    await open([profile({})]);

    element(fixture, '[aria-label="Retire Demo microwave 17 G"]').click();
    const request = http.expectOne(`${listUrl}/profile-1`);
    expect(request.request.method).toBe('PATCH');
    expect(request.request.body).toEqual({ isRetired: true });
    request.flush(profile({ isRetired: true }));
    await fixture.whenStable();

    expect(rowOf('Demo microwave 17 G').textContent).toContain('Retired');
    expect(textOf(fixture)).toContain(
      'Demo microwave 17 G is retired: new plans cannot choose it.',
    );
  });

  it('keeps the profile as it was and says why when retiring is refused', async () => {
    await open([profile({})]);

    element(fixture, '[aria-label="Retire Demo microwave 17 G"]').click();
    http.expectOne(`${listUrl}/profile-1`).flush(
      {
        type: 'about:blank',
        title: 'Not found',
        status: 404,
        detail: 'The applicator profile was not found.',
      },
      { status: 404, statusText: 'Not Found' },
    );
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'Demo microwave 17 G was not changed: The applicator profile was not found.',
    );
    expect(rowOf('Demo microwave 17 G').textContent).toContain('In use');
  });

  it('has no accessibility violations that axe finds', async () => {
    await open([profile({})]);
    // jsdom lays nothing out, so contrast is left to the end-to-end run in a real browser.
    const result = await axe.run(fixture.nativeElement as HTMLElement, {
      rules: { 'color-contrast': { enabled: false } },
    });
    expect(result.violations.map((violation) => violation.id)).toEqual([]);
  });
});
