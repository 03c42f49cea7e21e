import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatExpansionPanelHarness } from '@angular/material/expansion/testing';
import { MatSelectHarness } from '@angular/material/select/testing';
import {
  DEFAULT_REHEARSAL_SETTINGS,
  type CaseDetail,
  type RehearsalSettings,
} from '@emberline/shared';
import { CaseFileState } from '../../cases/case-file-state';
import { caseDetailFixture } from '../../cases/testing/case-detail-fixture';
import { buttonNamed, element, submit, textOf, typeInto } from '../../../testing/dom';
import { RehearsalSettingsPanel } from './rehearsal-settings-panel';

const caseId = '9c1d2e3f-4a5b-4c6d-8e7f-0a1b2c3d4e5f';
const caseUrl = `/api/cases/${caseId}`;

/** Invented settings a presenter might set for a stiffer liver and deeper breathing. */
const ownSettings: RehearsalSettings = {
  resolution: 'fine',
  breathing: { amplitudeMm: 18, periodS: 5, shapeN: 3 },
  material: { youngsModulusPa: 12_500, poissonRatio: 0.45 },
};

function caseDetail(overrides: Partial<CaseDetail> = {}): CaseDetail {
  return caseDetailFixture({ id: caseId, ...overrides });
}

describe('RehearsalSettingsPanel', () => {
  let fixture: ComponentFixture<RehearsalSettingsPanel>;
  let http: HttpTestingController;
  const detail = signal<CaseDetail | undefined>(undefined);
  const replace = vi.fn((next: CaseDetail) => detail.set(next));

  async function open(value: CaseDetail): Promise<void> {
    detail.set(value);
    fixture = TestBed.createComponent(RehearsalSettingsPanel);
    await fixture.whenStable();
    const panel =
      await TestbedHarnessEnvironment.loader(fixture).getHarness(MatExpansionPanelHarness);
    await panel.expand();
    await fixture.whenStable();
  }

  const squeeze = (text: string | null) => (text ?? '').replace(/\s+/g, ' ').trim();

  /** The value listed for one setting (`data-setting`). */
  function valueOf(key: string): string {
    return squeeze(element(fixture, `[data-setting="${key}"] .value`).textContent);
  }

  function origin(): string {
    return squeeze(element(fixture, '[data-settings-origin]').textContent);
  }

  function inputValue(selector: string): string {
    return element<HTMLInputElement>(fixture, selector).value;
  }

  function errorOf(selector: string): string {
    const field = element(fixture, selector).closest('mat-form-field');
    return field?.querySelector('mat-error')?.textContent?.trim() ?? '';
  }

  beforeEach(async () => {
    replace.mockClear();
    detail.set(undefined);
    await TestBed.configureTestingModule({
      imports: [RehearsalSettingsPanel],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: CaseFileState, useValue: { caseId: signal(caseId), detail, replace } },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
  });

  afterEach(() => http.verify());

  it('shows the defaults in force, what each setting means, where the defaults come from and the caution', async () => {
    await open(caseDetail());
    expect(origin()).toBe('Defaults');
    // The defaults as the product states them: breathing 12 mm, 4 s, n = 2 (common practice for
    // quiet breathing on Lujan's curve, Med Phys 1999 — from memory); liver 6000 Pa, shown in
    // kPa (1 kPa = 1000 Pa, SI); Poisson's ratio 0.45 (near-incompressible tissue, common
    // practice); the medium mesh of about 6 mm cells.
    expect(valueOf('resolution')).toBe('medium (cells of about 6 mm)');
    expect(valueOf('amplitudeMm')).toBe('12 mm');
    expect(valueOf('periodS')).toBe('4 s');
    expect(valueOf('shapeN')).toBe('n = 2');
    expect(valueOf('youngsModulusKPa')).toBe('6 kPa');
    expect(valueOf('poissonRatio')).toBe('0.45');
    for (const key of ['resolution', 'amplitudeMm', 'periodS', 'shapeN', 'youngsModulusKPa']) {
      // Each setting has its one-line explanation beside it.
      expect(
        squeeze(element(fixture, `[data-setting="${key}"] dd.em-note`).textContent).length,
      ).toBeGreaterThan(20);
    }
    const source = element(fixture, '[data-defaults-source]').textContent ?? '';
    expect(source).toContain('common practice for quiet breathing');
    expect(source).toContain('Lujan');
    expect(source).toContain('elastography');
    expect(source).toContain('from memory');
    expect(element(fixture, '[data-applies-next]').textContent).toContain(
      'New settings apply to the next assessment requested',
    );
    const caution = element(fixture, '[data-rehearsal-caution]').textContent ?? '';
    expect(caution).toContain('simulation estimate');
    expect(caution).toContain('The treating team decides');
    // The presenter's form starts from the settings in force.
    expect(inputValue('#rehearsal-amplitude')).toBe('12');
    expect(inputValue('#rehearsal-youngs-modulus')).toBe('6');
  });

  it('says a case has its own settings and names the default beside each one that differs', async () => {
    await open(caseDetail({ rehearsal: ownSettings, hasOwnRehearsalSettings: true }));
    expect(origin()).toBe('Set for this case');
    expect(valueOf('amplitudeMm')).toBe('18 mm (default 12 mm)');
    expect(valueOf('youngsModulusKPa')).toBe('12.5 kPa (default 6 kPa)');
    expect(valueOf('poissonRatio')).toBe('0.45');
    expect(inputValue('#rehearsal-youngs-modulus')).toBe('12.5');
  });

  it('lets the presenter save new settings for the case, stiffness sent in pascals', async () => {
    await open(caseDetail());
    const select = await TestbedHarnessEnvironment.loader(fixture).getHarness(
      MatSelectHarness.with({ selector: '#rehearsal-resolution' }),
    );
    await select.open();
    await select.clickOptions({ text: 'coarse (cells of about 8 mm)' });
    typeInto(fixture, '#rehearsal-amplitude', '15');
    typeInto(fixture, '#rehearsal-period', '4.5');
    typeInto(fixture, '#rehearsal-youngs-modulus', '8.2');
    submit(fixture);

    const patch = http.expectOne(caseUrl);
    expect(patch.request.method).toBe('PATCH');
    // 8.2 kPa is 8200 Pa (1 kPa = 1000 Pa, SI).
    const saved: RehearsalSettings = {
      resolution: 'coarse',
      breathing: { amplitudeMm: 15, periodS: 4.5, shapeN: 2 },
      material: { youngsModulusPa: 8200, poissonRatio: 0.45 },
    };
    expect(patch.request.body).toEqual({ rehearsal: saved });
    patch.flush(caseDetail({ rehearsal: saved, hasOwnRehearsalSettings: true }));
    await fixture.whenStable();

    expect(replace).toHaveBeenCalledTimes(1);
    expect(origin()).toBe('Set for this case');
    expect(valueOf('amplitudeMm')).toBe('15 mm (default 12 mm)');
    expect(textOf(fixture)).toContain('Saved for this case.');
  });

  it('refuses values outside the shared rule before asking the server', async () => {
    await open(caseDetail());
    // The shared schema allows 0–40 mm of breathing and 500 Pa–100 kPa of stiffness.
    typeInto(fixture, '#rehearsal-amplitude', '50');
    typeInto(fixture, '#rehearsal-youngs-modulus', '0.2');
    submit(fixture);
    await fixture.whenStable();

    http.expectNone(caseUrl);
    expect(errorOf('#rehearsal-amplitude')).toBe('At most 40');
    expect(errorOf('#rehearsal-youngs-modulus')).toBe('At least 0.5 kPa');
    expect(textOf(fixture)).toContain('Not saved: correct the fields marked first.');
  });

  it('sends the case back to the defaults with { rehearsal: null }', async () => {
    await open(caseDetail({ rehearsal: ownSettings, hasOwnRehearsalSettings: true }));
    buttonNamed(fixture, 'Back to the defaults').click();

    const patch = http.expectOne(caseUrl);
    expect(patch.request.method).toBe('PATCH');
    expect(patch.request.body).toEqual({ rehearsal: null });
    patch.flush(caseDetail());
    await fixture.whenStable();

    expect(origin()).toBe('Defaults');
    expect(valueOf('amplitudeMm')).toBe('12 mm');
    expect(inputValue('#rehearsal-amplitude')).toBe('12');
    expect(textOf(fixture)).toContain('The case uses the defaults again');
  });

  it('offers no way back to the defaults while the case already uses them', async () => {
    await open(caseDetail());
    expect(buttonNamed(fixture, 'Back to the defaults').disabled).toBe(true);
  });

  it('shows the server’s field errors on their fields and keeps what was typed', async () => {
    await open(caseDetail());
    typeInto(fixture, '#rehearsal-amplitude', '30');
    typeInto(fixture, '#rehearsal-youngs-modulus', '90');
    submit(fixture);

    http.expectOne(caseUrl).flush(
      {
        type: 'about:blank',
        title: 'Bad Request',
        status: 400,
        detail: 'rehearsal.material.youngsModulusPa: At most 80 kPa on this server',
        errors: [
          { path: 'rehearsal.material.youngsModulusPa', message: 'At most 80 kPa on this server' },
          { path: 'rehearsal', message: 'Invented refusal of the whole object' },
        ],
      },
      { status: 400, statusText: 'Bad Request' },
    );
    await fixture.whenStable();

    expect(errorOf('#rehearsal-youngs-modulus')).toBe('At most 80 kPa on this server');
    const alert = element(fixture, '[role="alert"]').textContent ?? '';
    expect(alert).toContain('Not saved.');
    expect(alert).toContain('rehearsal: Invented refusal of the whole object');
    expect(inputValue('#rehearsal-amplitude')).toBe('30');
    expect(inputValue('#rehearsal-youngs-modulus')).toBe('90');
    expect(replace).not.toHaveBeenCalled();
    expect(origin()).toBe('Defaults');
  });

  it('keeps unsaved typing when the case changes elsewhere', async () => {
    await open(caseDetail());
    typeInto(fixture, '#rehearsal-amplitude', '20');
    // Another part of the case file saved: the server's answer carries fresh objects.
    detail.set(
      caseDetail({
        caseCode: 'NLB-2026-045',
        rehearsal: structuredClone(DEFAULT_REHEARSAL_SETTINGS),
      }),
    );
    await fixture.whenStable();
    expect(inputValue('#rehearsal-amplitude')).toBe('20');
  });

  it('shows someone who does not present the case the settings, but no form', async () => {
    await open(
      caseDetail({ permissions: { canEdit: false, canDelete: false, canAddLabPanel: false } }),
    );
    expect(valueOf('amplitudeMm')).toBe('12 mm');
    expect((fixture.nativeElement as HTMLElement).querySelector('form')).toBeNull();
    expect((fixture.nativeElement as HTMLElement).querySelector('input')).toBeNull();
    expect(textOf(fixture)).toContain(
      'Only the case’s presenting physician changes these settings',
    );
  });

  it('shows nothing until the case has been read', async () => {
    fixture = TestBed.createComponent(RehearsalSettingsPanel);
    await fixture.whenStable();
    expect((fixture.nativeElement as HTMLElement).querySelector('[data-rehearsal-settings]')).toBe(
      null,
    );
  });
});
