import { HttpEventType, provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import axe from 'axe-core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { ImageSeriesView, ProblemDetails } from '@emberline/shared';
import { buttonNamed, element, textOf } from '../../testing/dom';
import { SeriesUpload } from './series-upload';

const caseId = '3f9b2f6e-9a57-4a0f-8f8e-1c2d3e4f5a6b';
const uploadUrl = `/api/cases/${caseId}/series`;

function dicomFile(name: string, bytes: number): File {
  return new File([new Uint8Array(bytes)], name, { type: 'application/dicom' });
}

describe('SeriesUpload', () => {
  let fixture: ComponentFixture<SeriesUpload>;
  let http: HttpTestingController;

  async function choose(files: File[]): Promise<void> {
    const picker = element<HTMLInputElement>(fixture, '#series-files');
    Object.defineProperty(picker, 'files', { value: files, configurable: true });
    picker.dispatchEvent(new Event('change'));
    await fixture.whenStable();
  }

  function progressValue(): string | null {
    return element(fixture, 'mat-progress-bar').getAttribute('aria-valuenow');
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [SeriesUpload],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(SeriesUpload);
    fixture.componentRef.setInput('caseId', caseId);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  it('sends every chosen file in the field files and shows the transfer, then the reading', async () => {
    const files = [dicomFile('slice-001.dcm', 1500), dicomFile('slice-002.dcm', 500)];
    await choose(files);
    expect(textOf(fixture)).toContain('2 files chosen, 2 kB in all.');

    buttonNamed(fixture, 'Upload series').click();
    const request = http.expectOne(uploadUrl);
    expect(request.request.method).toBe('POST');
    expect(request.request.reportProgress).toBe(true);
    const body = request.request.body as FormData;
    expect(body.getAll('files').map((file) => (file as File).name)).toEqual([
      'slice-001.dcm',
      'slice-002.dcm',
    ]);

    request.event({ type: HttpEventType.UploadProgress, loaded: 500, total: 2000 });
    await fixture.whenStable();
    expect(element(fixture, 'mat-progress-bar').getAttribute('mode')).toBe('determinate');
    expect(progressValue()).toBe('25');
    expect(textOf(fixture)).toContain('Sending… 25 %');

    request.event({ type: HttpEventType.UploadProgress, loaded: 2000, total: 2000 });
    await fixture.whenStable();
    expect(element(fixture, 'mat-progress-bar').getAttribute('mode')).toBe('indeterminate');
    expect(textOf(fixture)).toContain('Reading and de-identifying the series');

    const uploaded: ImageSeriesView[] = [];
    fixture.componentInstance.uploaded.subscribe((series) => uploaded.push(series));
    request.flush({ id: 'series-1', modality: 'CT', sliceCount: 2 } as ImageSeriesView, {
      status: 201,
      statusText: 'Created',
    });
    await fixture.whenStable();
    expect(uploaded.map((series) => series.id)).toEqual(['series-1']);
    expect(textOf(fixture)).toContain('Series stored: CT, 2 slices.');
    expect(textOf(fixture)).toContain('No file chosen.');
  });

  it('shows the detail of a refusal and keeps the chosen files', async () => {
    await choose([dicomFile('a.dcm', 10), dicomFile('b.dcm', 10), dicomFile('c.dcm', 10)]);
    buttonNamed(fixture, 'Upload series').click();
    const refusal: ProblemDetails = {
      type: 'urn:emberline:problem:imaging:missing-slice',
      title: 'Inconsistent series',
      status: 400,
      detail: 'A slice is missing between 12.5 mm and 17.5 mm along the slice normal.',
    };
    http.expectOne(uploadUrl).flush(refusal, { status: 400, statusText: 'Bad Request' });
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'A slice is missing between 12.5 mm and 17.5 mm along the slice normal.',
    );
    expect(textOf(fixture)).toContain('3 files chosen');

    buttonNamed(fixture, 'Upload series').click();
    const again = http.expectOne(uploadUrl);
    expect((again.request.body as FormData).getAll('files')).toHaveLength(3);
    again.flush(refusal, { status: 400, statusText: 'Bad Request' });
  });

  it('refuses a zip chosen together with other files before sending', async () => {
    await choose([dicomFile('series.zip', 10), dicomFile('extra.dcm', 10)]);
    buttonNamed(fixture, 'Upload series').click();
    await fixture.whenStable();

    http.expectNone(uploadUrl);
    expect(element(fixture, '[role="alert"]').textContent).toContain('A zip is sent on its own');
    expect(textOf(fixture)).toContain('2 files chosen');
  });

  it('has no accessibility violations that axe finds', async () => {
    await choose([dicomFile('a.dcm', 10)]);
    // jsdom lays nothing out, so contrast is left to the end-to-end run in a real browser.
    const result = await axe.run(fixture.nativeElement as HTMLElement, {
      rules: { 'color-contrast': { enabled: false } },
    });
    expect(result.violations.map((violation) => violation.id)).toEqual([]);
  });
});
