import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import axe from 'axe-core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { LesionView, ProblemDetails, StructureView } from '@emberline/shared';
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
    lesionId: null,
    lesionLabel: null,
    isLesionConfirmed: false,
    ...overrides,
  };
}

const lesions: LesionView[] = [
  { id: 'lesion-viii', segment: 'VIII', diameterMm: 24, kind: 'hcc' },
  { id: 'lesion-vi', segment: 'VI', diameterMm: 18, kind: 'hcc' },
];

/** A tumour the server linked to the segment VIII lesion, not yet confirmed. */
const suggestedTumour = structure({
  id: 'structure-2',
  labelValue: 2,
  kind: 'tumour',
  name: 'Tumour 1',
  lesionId: 'lesion-viii',
  lesionLabel: 'segment VIII, 24 mm',
});

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
    fixture.componentRef.setInput('lesions', lesions);
  });

  afterEach(() => http.verify());

  /** The button whose accessible name (aria-label) is `label`. */
  function buttonLabelled(label: string): HTMLButtonElement {
    return element<HTMLButtonElement>(fixture, `button[aria-label="${label}"]`);
  }

  it('renames a structure, sending the name trimmed, and shows the server’s refusal of a taken one', async () => {
    await open([structure({ kind: 'liver', name: 'Liver' }), suggestedTumour]);
    buttonLabelled('Rename label 2, Tumour 1').click();
    await fixture.whenStable();
    typeInto(fixture, '#structure-name-structure-2', '  Liver  ');
    await fixture.whenStable();
    element<HTMLInputElement>(fixture, '#structure-name-structure-2').dispatchEvent(
      new KeyboardEvent('keydown', { key: 'Enter' }),
    );
    const taken = http.expectOne('/api/structures/structure-2');
    expect(taken.request.method).toBe('PATCH');
    expect(taken.request.body).toEqual({ name: 'Liver' });
    const refusal: ProblemDetails = {
      type: 'about:blank',
      title: 'Conflict',
      status: 409,
      detail: 'Another structure of this series is named "Liver".',
    };
    taken.flush(refusal, { status: 409, statusText: 'Conflict' });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain(
      'Label 2 was not renamed. Another structure of this series is named "Liver".',
    );

    typeInto(fixture, '#structure-name-structure-2', 'Tumour of segment VIII');
    await fixture.whenStable();
    element<HTMLInputElement>(fixture, '#structure-name-structure-2').dispatchEvent(
      new KeyboardEvent('keydown', { key: 'Enter' }),
    );
    http
      .expectOne('/api/structures/structure-2')
      .flush({ ...suggestedTumour, name: 'Tumour of segment VIII' });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Tumour of segment VIII');
    expect((fixture.nativeElement as HTMLElement).querySelector('.rename-input')).toBeNull();
  });

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
    request.flush(
      { structures: [structure({ kind: 'liver' })], overlaps: [] },
      { status: 201, statusText: 'Created' },
    );
    TestBed.tick();

    http.expectOne({ method: 'GET', url: listUrl }).flush([structure({ kind: 'liver' })]);
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('1 structure imported.');
  });

  it('lists the overlapping segments the server resolved after a SEG import', async () => {
    await open([]);
    const prefix = `#structure-import-${seriesId}`;
    const picker = element<HTMLInputElement>(fixture, `${prefix}-file`);
    Object.defineProperty(picker, 'files', {
      value: [new File([new Uint8Array(8)], 'segmentation.dcm')],
      configurable: true,
    });
    picker.dispatchEvent(new Event('change'));
    submit(fixture);
    const message =
      'Segment “Tumour 1” overlapped “Liver” in 3,412 voxels; tumour kept (it ranks before liver).';
    http.expectOne({ method: 'POST', url: listUrl }).flush(
      {
        structures: [suggestedTumour],
        overlaps: [
          {
            keptSegment: 2,
            keptName: 'Tumour 1',
            keptKind: 'tumour',
            lostSegment: 1,
            lostName: 'Liver',
            lostKind: 'liver',
            voxelCount: 3412,
            message,
          },
        ],
      },
      { status: 201, statusText: 'Created' },
    );
    TestBed.tick();
    http.expectOne({ method: 'GET', url: listUrl }).flush([suggestedTumour]);
    await fixture.whenStable();

    const text = textOf(fixture);
    expect(text).toContain('Overlapping segments were resolved');
    expect(text).toContain(message);
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

  describe("a tumour's lesion", () => {
    const linkSelector = '[data-lesion-link="structure-2"] mat-select';

    it('shows the suggested lesion and confirms it with a PATCH, then lists again', async () => {
      await open([suggestedTumour]);
      expect(element(fixture, linkSelector).textContent).toContain('segment VIII, 24 mm');
      expect(textOf(fixture)).toContain('Suggested');
      expect(textOf(fixture)).toContain('only suggested');

      buttonLabelled('Confirm the lesion of label 2').click();
      const request = http.expectOne('/api/structures/structure-2');
      expect(request.request.method).toBe('PATCH');
      expect(request.request.body).toEqual({ lesionId: 'lesion-viii', isLesionConfirmed: true });
      const confirmed = { ...suggestedTumour, isLesionConfirmed: true };
      request.flush(confirmed);
      TestBed.tick();
      // Other tumours' suggestions may follow the confirmation: the list is asked again.
      http.expectOne({ method: 'GET', url: listUrl }).flush([confirmed]);
      await fixture.whenStable();

      expect(textOf(fixture)).toContain('Confirmed');
      expect(buttonLabelled('Release the confirmed lesion of label 2')).toBeTruthy();
    });

    it('confirms another lesion chosen in the select', async () => {
      await open([suggestedTumour]);
      await pick(linkSelector, 'segment VI, 18 mm');
      buttonLabelled('Confirm the lesion of label 2').click();
      const request = http.expectOne('/api/structures/structure-2');
      expect(request.request.body).toEqual({ lesionId: 'lesion-vi', isLesionConfirmed: true });
      request.flush({ ...suggestedTumour, lesionId: 'lesion-vi', isLesionConfirmed: true });
      TestBed.tick();
      http.expectOne({ method: 'GET', url: listUrl }).flush([]);
      await fixture.whenStable();
    });

    it("confirms that the tumour shows none of the Summary's lesions (lesionId null)", async () => {
      await open([suggestedTumour]);
      await pick(linkSelector, 'None of the Summary’s lesions');
      buttonLabelled('Confirm the lesion of label 2').click();
      const request = http.expectOne('/api/structures/structure-2');
      expect(request.request.body).toEqual({ lesionId: null, isLesionConfirmed: true });
      request.flush({ ...suggestedTumour, lesionId: null, isLesionConfirmed: true });
      TestBed.tick();
      http.expectOne({ method: 'GET', url: listUrl }).flush([]);
      await fixture.whenStable();
    });

    it('keeps the choice and shows the refusal when the link is not saved', async () => {
      await open([suggestedTumour]);
      await pick(linkSelector, 'segment VI, 18 mm');
      buttonLabelled('Confirm the lesion of label 2').click();
      const detail = 'The lesion segment VI, 18 mm is already confirmed for label 3.';
      http
        .expectOne('/api/structures/structure-2')
        .flush(
          { type: 'about:blank', title: 'Conflict', status: 409, detail },
          { status: 409, statusText: 'Conflict' },
        );
      await fixture.whenStable();

      expect(element(fixture, '[role="alert"]').textContent).toContain(detail);
      expect(element(fixture, linkSelector).textContent).toContain('segment VI, 18 mm');
      expect(buttonLabelled('Confirm the lesion of label 2').disabled).toBe(false);
    });

    it('is read-only for those who may not change it', async () => {
      fixture.componentRef.setInput('canEdit', false);
      await open([suggestedTumour]);

      expect((fixture.nativeElement as HTMLElement).querySelector(linkSelector)).toBeNull();
      expect(textOf(fixture)).toContain('segment VIII, 24 mm (suggested, not confirmed)');
      expect(textOf(fixture)).not.toContain('Confirm');
    });
  });

  it('has no accessibility violations that axe finds', async () => {
    await open([structure({ kind: 'liver', name: 'Liver' }), suggestedTumour]);
    // jsdom lays nothing out, so contrast is left to the end-to-end run in a real browser.
    const result = await axe.run(fixture.nativeElement as HTMLElement, {
      rules: { 'color-contrast': { enabled: false } },
    });
    expect(result.violations.map((violation) => violation.id)).toEqual([]);
  });
});
