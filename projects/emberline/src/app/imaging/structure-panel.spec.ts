import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import axe from 'axe-core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { ProblemDetails, StructureView } from '@emberline/shared';
import { element, submit, textOf, typeInto } from '../../testing/dom';
import { StructurePanel } from './structure-panel';

const seriesId = '8d0c5a52-7f4e-4b1a-9c3d-2e1f0a9b8c7d';
const listUrl = `/api/series/${seriesId}/structures`;

function structure(overrides: Partial<StructureView>): StructureView {
  return {
    id: 'structure-1',
    seriesId,
    labelValue: 1,
    kind: null,
    name: 'Label 1',
    voxelCount: 12_345,
    volumeMl: 24.6813,
    source: 'nifti',
    ...overrides,
  };
}

describe('StructurePanel', () => {
  let fixture: ComponentFixture<StructurePanel>;
  let http: HttpTestingController;

  async function open(structures: StructureView[]): Promise<void> {
    // The list is a resource: whenStable would wait for it, so render once and answer it first.
    fixture.detectChanges();
    http.expectOne(listUrl).flush(structures);
    await fixture.whenStable();
  }

  /** Opens the mat-select matching `selector` and clicks the option named `label`. */
  async function pick(selector: string, label: string): Promise<void> {
    const select = element(fixture, selector);
    element(fixture, `${selector} .mat-mdc-select-trigger`).click();
    await fixture.whenStable();
    // Only the open panel's options: a closed panel may linger in the overlay while it fades.
    const panel = document.getElementById(select.getAttribute('aria-controls') ?? '');
    if (!panel) throw new Error(`The select ${selector} did not open`);
    const options = Array.from(panel.querySelectorAll<HTMLElement>('mat-option'));
    const option = options.find((candidate) => candidate.textContent?.trim() === label);
    if (!option) throw new Error(`No option ${label}`);
    option.click();
    await fixture.whenStable();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [StructurePanel],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(StructurePanel);
    fixture.componentRef.setInput('seriesId', seriesId);
    fixture.componentRef.setInput('canEdit', true);
  });

  afterEach(() => http.verify());

  it('lists the structures with their volume to one decimal and their voxel count', async () => {
    await open([structure({ kind: 'liver', name: 'Liver' })]);

    const text = textOf(fixture);
    expect(text).toContain('24.7 mL');
    expect(text).toContain('12,345');
    expect(text).toContain('Volumes are measured from the imported label map');
  });

  it('imports a label map in the field file with the rows as the labels JSON', async () => {
    await open([]);
    const prefix = `#structure-import-${seriesId}`;
    const picker = element<HTMLInputElement>(fixture, `${prefix}-file`);
    const labelMap = new File([new Uint8Array(64)], 'labels.nii.gz');
    Object.defineProperty(picker, 'files', { value: [labelMap], configurable: true });
    picker.dispatchEvent(new Event('change'));
    typeInto(fixture, `${prefix}-label-0`, '1');
    await pick(`${prefix}-kind-0`, 'Liver');
    element(fixture, '.add-row').click();
    await fixture.whenStable();
    typeInto(fixture, `${prefix}-label-1`, '2');
    await pick(`${prefix}-kind-1`, 'Tumour');
    submit(fixture);

    const request = http.expectOne({ method: 'POST', url: listUrl });
    const body = request.request.body as FormData;
    expect((body.get('file') as File).name).toBe('labels.nii.gz');
    expect(JSON.parse(body.get('labels') as string)).toEqual({ '1': 'liver', '2': 'tumour' });
    request.flush([structure({ kind: 'liver' })], { status: 201, statusText: 'Created' });
    TestBed.tick();

    http.expectOne({ method: 'GET', url: listUrl }).flush([structure({ kind: 'liver' })]);
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('1 structure imported.');
  });

  it('shows the refusal of an import and keeps the file and the rows', async () => {
    await open([]);
    const prefix = `#structure-import-${seriesId}`;
    const picker = element<HTMLInputElement>(fixture, `${prefix}-file`);
    Object.defineProperty(picker, 'files', {
      value: [new File([new Uint8Array(8)], 'labels.nii')],
      configurable: true,
    });
    picker.dispatchEvent(new Event('change'));
    typeInto(fixture, `${prefix}-label-0`, '3');
    await pick(`${prefix}-kind-0`, 'Portal vein');
    submit(fixture);
    const refusal: ProblemDetails = {
      type: 'urn:emberline:problem:structures:grid-mismatch',
      title: 'Label map does not fit',
      status: 400,
      detail: 'The label map is 256 × 256 × 40 voxels; the series is 512 × 512 × 120.',
    };
    http.expectOne({ method: 'POST', url: listUrl }).flush(refusal, {
      status: 400,
      statusText: 'Bad Request',
    });
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain(refusal.detail);
    expect(textOf(fixture)).toContain('labels.nii,');
    expect(element<HTMLInputElement>(fixture, `${prefix}-label-0`).value).toBe('3');
  });

  it('remaps a kind with a PATCH and shows the saved structure', async () => {
    await open([structure({ id: 'structure-7', labelValue: 7, name: 'Label 7' })]);

    await pick('[data-structure="structure-7"]', 'Hepatic vein');
    const request = http.expectOne('/api/structures/structure-7');
    expect(request.request.method).toBe('PATCH');
    expect(request.request.body).toEqual({ kind: 'hepatic-vein' });
    request.flush(structure({ id: 'structure-7', labelValue: 7, kind: 'hepatic-vein' }));
    await fixture.whenStable();

    expect(element(fixture, '[data-structure="structure-7"]').textContent).toContain(
      'Hepatic vein',
    );
    expect(textOf(fixture)).not.toContain('Not saved');
  });

  it('keeps a refused kind chosen and marked as not saved', async () => {
    await open([structure({ id: 'structure-7', labelValue: 7, name: 'Label 7' })]);

    await pick('[data-structure="structure-7"]', 'Bile duct');
    http
      .expectOne('/api/structures/structure-7')
      .flush(
        { type: 'about:blank', title: 'Forbidden', status: 403, detail: 'Only the presenter.' },
        { status: 403, statusText: 'Forbidden' },
      );
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain('Only the presenter.');
    expect(element(fixture, '[data-structure="structure-7"]').textContent).toContain('Bile duct');
    expect(textOf(fixture)).toContain('Not saved');
  });

  it('has no accessibility violations that axe finds', async () => {
    await open([structure({ kind: 'tumour', name: 'Tumour' })]);
    // jsdom lays nothing out, so contrast is left to the end-to-end run in a real browser.
    const result = await axe.run(fixture.nativeElement as HTMLElement, {
      rules: { 'color-contrast': { enabled: false } },
    });
    expect(result.violations.map((violation) => violation.id)).toEqual([]);
  });
});
