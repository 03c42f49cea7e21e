import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { safetyProfileBodySchema, type SafetyProfileView } from '@emberline/shared';
import axe from 'axe-core';
import { element, textOf } from '../../testing/dom';
import { SafetyProfiles } from './safety-profiles';

const listUrl = '/api/admin/safety-profiles';

// Fixture values: margin 5 mm minimum / 10 mm ideal and heat sink ≥ 3 mm within ~10 mm are the
// common practice (margin: Wang X et al., Cardiovasc Intervent Radiol 2013; heat sink: Lu DSK et
// al., AJR 2002; "within 10 mm" a project default); the rest is invented for the test.
function profile(overrides: Partial<SafetyProfileView>): SafetyProfileView {
  return {
    id: 'safety-1',
    name: 'Demo thresholds',
    structureRules: [
      { kind: 'gallbladder', minimumClearanceMm: 10, isCritical: true, source: 'Common practice' },
      { kind: 'bowel', minimumClearanceMm: 10, isCritical: true, source: 'Common practice' },
      { kind: 'portal-vein', minimumClearanceMm: 5, isCritical: false, source: 'Invented' },
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
    version: 1,
    createdAt: '2026-11-30T09:00:00.000Z',
    updatedAt: '2026-11-30T09:00:00.000Z',
    ...overrides,
  };
}

describe('SafetyProfiles', () => {
  let fixture: ComponentFixture<SafetyProfiles>;
  let http: HttpTestingController;

  async function open(profiles: SafetyProfileView[]): Promise<void> {
    // The list is a resource: whenStable would wait for it, so render once and answer it first.
    fixture.detectChanges();
    http.expectOne(listUrl).flush(profiles);
    await fixture.whenStable();
  }

  function rowOf(name: string): string {
    const rows = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll<HTMLElement>('tr.mat-mdc-row'),
    );
    const row = rows.find((candidate) => candidate.textContent?.includes(name));
    if (!row) throw new Error(`No row for ${name}`);
    return (row.textContent ?? '').replace(/\s+/g, ' ');
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [SafetyProfiles],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(SafetyProfiles);
  });

  afterEach(() => http.verify());

  it('lists the profiles with their version, rules, margins, heat sink and physics tolerance in mm, the default marked', async () => {
    await open([
      profile({}),
      profile({
        id: 'safety-2',
        name: 'Wider margins',
        marginTargetMm: 15,
        physicsToleranceMm: 1.5,
        isDefault: false,
        version: 4,
      }),
    ]);

    const demo = rowOf('Demo thresholds');
    expect(demo).toContain('Default for new assessments');
    expect(demo).toContain('3 kinds, 2 critical');
    expect(demo).toContain('10 / 5 mm');
    expect(demo).toContain('≥ 3 mm within 10 mm');
    expect(demo).toContain('≤ 2 mm');
    expect(demo).toContain('version 1');
    expect(demo).not.toContain('Make default');
    const wider = rowOf('Wider margins');
    expect(wider).not.toContain('Default for new assessments');
    expect(wider).toContain('15 / 5 mm');
    expect(wider).toContain('≤ 1.5 mm');
    expect(wider).toContain('version 4');
    expect(textOf(fixture)).toContain('The treating team decides, following local protocols');
  });

  it('makes a profile the default with a PATCH of isDefault alone, then reloads the list', async () => {
    const wider = profile({ id: 'safety-2', name: 'Wider margins', isDefault: false });
    await open([profile({}), wider]);

    element(fixture, '[aria-label="Make default: Wider margins"]').click();
    const request = http.expectOne(`${listUrl}/safety-2`);
    expect(request.request.method).toBe('PATCH');
    // Only the default changes: no threshold is sent, so no new version is made.
    expect(request.request.body).toEqual({ isDefault: true });
    expect(safetyProfileBodySchema.partial().safeParse(request.request.body).success).toBe(true);
    request.flush({ ...wider, isDefault: true });
    TestBed.tick();

    http.expectOne(listUrl).flush([{ ...wider, isDefault: true }, profile({ isDefault: false })]);
    await fixture.whenStable();
    expect(rowOf('Wider margins')).toContain('Default for new assessments');
    expect(rowOf('Demo thresholds')).toContain('Make default');
    expect(textOf(fixture)).toContain('Wider margins is now the default for new assessments.');
  });

  it('has no accessibility violations that axe finds', async () => {
    // A profile that is not the default, so that its "Make default" button is checked too.
    await open([profile({}), profile({ id: 'safety-2', name: 'Wider margins', isDefault: false })]);
    // jsdom lays nothing out, so contrast is left to the end-to-end run in a real browser.
    const result = await axe.run(fixture.nativeElement as HTMLElement, {
      rules: { 'color-contrast': { enabled: false } },
    });
    expect(result.violations.map((violation) => violation.id)).toEqual([]);
  });
});
