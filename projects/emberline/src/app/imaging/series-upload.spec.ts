import { HttpEventType, provideHttpClient, type HttpRequest } from '@angular/common/http';
import {
  HttpTestingController,
  provideHttpClientTesting,
  type TestRequest,
} from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import axe from 'axe-core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatDialog } from '@angular/material/dialog';
import type {
  ImageSeriesView,
  ProblemDetails,
  SeriesCompression,
  UploadListing,
  UploadProgress,
  UploadSeriesCandidate,
} from '@emberline/shared';
import { lossyCompressionNote } from '@emberline/shared';
import { of } from 'rxjs';
import { buttonNamed, element, textOf } from '../../testing/dom';
import type { ConfirmDialogData } from '../core/confirm-dialog';
import { progressPollPeriodMs } from './progress-polling';
import { SeriesUpload } from './series-upload';

// Invented demo data throughout: no file here comes from a patient.
const caseId = '3f9b2f6e-9a57-4a0f-8f8e-1c2d3e4f5a6b';
const uploadUrl = `/api/cases/${caseId}/series`;
/** Matches a request by method and path, whatever its query (the progress token is random). */
function requestTo(method: string, url: string): (request: HttpRequest<unknown>) => boolean {
  return (request) => request.method === method && request.url === url;
}
const uploadRequest = requestTo('POST', uploadUrl);
const keepRequest = requestTo('POST', '/api/uploads/upload-7/keep');
/** RFC 9562 §5.4: version 4 in the version nibble, variant 10 in the variant bits. */
const uuidV4 = /^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/;

function dicomFile(name: string, bytes: number): File {
  return new File([new Uint8Array(bytes)], name, { type: 'application/dicom' });
}

/** A file as a browser hands it over from a folder picker, with its path inside the folder. */
function folderFile(relativePath: string, bytes: number): File {
  const file = dicomFile(relativePath.split('/').at(-1) ?? relativePath, bytes);
  Object.defineProperty(file, 'webkitRelativePath', { value: relativePath });
  return file;
}

function candidate(
  fields: Partial<UploadSeriesCandidate> & { key: string },
): UploadSeriesCandidate {
  return {
    description: `CT series ${fields.key}`,
    modality: 'CT',
    seriesNumber: null,
    sliceCount: 120,
    sliceThicknessMm: 2.5,
    orientation: 'axial',
    phaseHint: null,
    matrix: [512, 512],
    transferSyntaxName: 'Explicit VR Little Endian',
    isLossy: false,
    ...fields,
  };
}

const listing: UploadListing = {
  uploadId: 'upload-7',
  expiresAt: '2026-12-02T11:45:00.000Z',
  series: [
    candidate({
      key: 'k-arterial',
      description: 'Liver arterial 1.0',
      seriesNumber: 3,
      phaseHint: 'arterial',
      sliceCount: 310,
      sliceThicknessMm: 1,
    }),
    candidate({
      key: 'k-portal',
      description: 'Liver portal venous 2.5',
      seriesNumber: 4,
      phaseHint: 'portal venous',
      sliceCount: 124,
      transferSyntaxName: 'JPEG 2000 Image Compression',
      isLossy: true,
    }),
    candidate({
      key: 'k-unknown',
      description: 'Abdomen coronal',
      orientation: 'coronal',
      matrix: [512, 400],
      sliceThicknessMm: null,
    }),
  ],
  skipped: [
    { description: 'Dose report', reason: 'a structured report, not an image series' },
    { description: 'Localizer (CT)', reason: 'a scout view of 2 slices' },
  ],
};

function stored(id: string, seriesNumber: number, compression: SeriesCompression | null = null) {
  return { id, seriesNumber, modality: 'CT', sliceCount: 124, compression } as ImageSeriesView;
}

describe('SeriesUpload', () => {
  let fixture: ComponentFixture<SeriesUpload>;
  let http: HttpTestingController;
  let dialogData: ConfirmDialogData[];
  let uploaded: ImageSeriesView[];

  async function choose(files: File[], selector = '#series-files'): Promise<void> {
    const picker = element<HTMLInputElement>(fixture, selector);
    Object.defineProperty(picker, 'files', { value: files, configurable: true });
    picker.dispatchEvent(new Event('change'));
    await fixture.whenStable();
  }

  function progressValue(): string | null {
    return element(fixture, 'mat-progress-bar').getAttribute('aria-valuenow');
  }

  function progressBars(): { label: string | null; value: string | null }[] {
    return Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('mat-progress-bar'),
      (bar) => ({
        label: bar.getAttribute('aria-label'),
        value: bar.getAttribute('aria-valuenow'),
      }),
    );
  }

  function progressPolls(): TestRequest[] {
    return http.match((request) => request.url.startsWith('/api/upload-progress/'));
  }

  /** The checkbox input of the candidate whose row names `description`. */
  function checkbox(description: string): HTMLInputElement {
    const boxes = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('mat-checkbox'),
    );
    const box = boxes.find((found) => found.textContent?.includes(description));
    const input = box?.querySelector<HTMLInputElement>('input[type="checkbox"]');
    if (!input) throw new Error(`No checkbox for ${description}`);
    return input;
  }

  /** Sends the chosen files, finishes the transfer and answers 202 with the listing. */
  async function answerWithListing(): Promise<void> {
    buttonNamed(fixture, 'Upload series').click();
    const request = http.expectOne(uploadRequest);
    request.flush(listing, { status: 202, statusText: 'Accepted' });
    await fixture.whenStable();
  }

  beforeEach(async () => {
    dialogData = [];
    uploaded = [];
    await TestBed.configureTestingModule({
      imports: [SeriesUpload],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        // The confirmation is answered "yes" at once; what it asked is kept for the checks.
        {
          provide: MatDialog,
          useValue: {
            open: (_component: unknown, config: { data: ConfirmDialogData }) => {
              dialogData.push(config.data);
              return { afterClosed: () => of(true) };
            },
          },
        },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(SeriesUpload);
    fixture.componentRef.setInput('caseId', caseId);
    fixture.componentInstance.uploaded.subscribe((series) => uploaded.push(series));
    await fixture.whenStable();
  });

  afterEach(() => {
    http.verify();
    vi.useRealTimers();
  });

  it('sends every chosen file in the field files and shows the transfer, then the reading', async () => {
    const files = [dicomFile('slice-001.dcm', 1500), dicomFile('slice-002.dcm', 500)];
    await choose(files);
    expect(textOf(fixture)).toContain('2 files chosen, 2 kB in all.');

    // Fake timers from here on, so that the progress poll runs only when the test says.
    vi.useFakeTimers();
    buttonNamed(fixture, 'Upload series').click();
    const request = http.expectOne(uploadRequest);
    expect(request.request.reportProgress).toBe(true);
    expect(request.request.params.get('progress')).toMatch(uuidV4);
    const body = request.request.body as FormData;
    expect(body.getAll('files').map((file) => (file as File).name)).toEqual([
      'slice-001.dcm',
      'slice-002.dcm',
    ]);

    request.event({ type: HttpEventType.UploadProgress, loaded: 500, total: 2000 });
    TestBed.tick();
    expect(element(fixture, 'mat-progress-bar').getAttribute('mode')).toBe('determinate');
    expect(progressValue()).toBe('25');
    expect(textOf(fixture)).toContain('Sending… 25 %');

    request.event({ type: HttpEventType.UploadProgress, loaded: 2000, total: 2000 });
    TestBed.tick();
    expect(element(fixture, 'mat-progress-bar').getAttribute('mode')).toBe('indeterminate');
    expect(textOf(fixture)).toContain('Reading and de-identifying the series');

    request.flush(stored('series-1', 2), { status: 201, statusText: 'Created' });
    TestBed.tick();
    expect(uploaded.map((series) => series.id)).toEqual(['series-1']);
    expect(textOf(fixture)).toContain('Series stored: CT, 124 slices.');
    expect(textOf(fixture)).toContain('No file chosen.');
    expect(textOf(fixture)).not.toContain('This upload holds');
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
    http.expectOne(uploadRequest).flush(refusal, { status: 400, statusText: 'Bad Request' });
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'A slice is missing between 12.5 mm and 17.5 mm along the slice normal.',
    );
    expect(textOf(fixture)).toContain('3 files chosen');

    buttonNamed(fixture, 'Upload series').click();
    const again = http.expectOne(uploadRequest);
    expect((again.request.body as FormData).getAll('files')).toHaveLength(3);
    again.flush(refusal, { status: 400, statusText: 'Bad Request' });
  });

  it('refuses a zip chosen together with other files before sending', async () => {
    await choose([dicomFile('series.zip', 10), dicomFile('extra.dcm', 10)]);
    buttonNamed(fixture, 'Upload series').click();
    await fixture.whenStable();

    http.expectNone(uploadRequest);
    expect(element(fixture, '[role="alert"]').textContent).toContain('A zip is sent on its own');
    expect(textOf(fixture)).toContain('2 files chosen');
  });

  it('sends the files of a chosen folder under their paths, hidden files left out', async () => {
    await choose(
      [
        folderFile('CD/DICOMDIR', 400),
        folderFile('CD/DICOM/ST1/SE4/IM0001', 300),
        folderFile('CD/DICOM/ST1/SE4/IM0002', 300),
        folderFile('CD/.DS_Store', 6000),
      ],
      '#series-folder',
    );
    // Folders CD, CD/DICOM, CD/DICOM/ST1 and CD/DICOM/ST1/SE4; the hidden file's bytes not counted.
    expect(textOf(fixture)).toContain('3 files in 4 folders chosen, 1 kB in all.');

    buttonNamed(fixture, 'Upload series').click();
    const request = http.expectOne(uploadRequest);
    expect(
      (request.request.body as FormData).getAll('files').map((file) => (file as File).name),
    ).toEqual(['CD/DICOMDIR', 'CD/DICOM/ST1/SE4/IM0001', 'CD/DICOM/ST1/SE4/IM0002']);
    request.flush(stored('series-1', 4), { status: 201, statusText: 'Created' });
    await fixture.whenStable();
  });

  it('reads a dropped folder and sends its files under their paths', async () => {
    // A fake folder of the File and Directory Entries API: "study" holding "SE4" with two
    // images, a DICOMDIR and a hidden file; each folder hands its entries over in one batch.
    const fileEntry = (name: string) =>
      ({
        name,
        isFile: true,
        isDirectory: false,
        file: (resolve: (file: File) => void) => resolve(dicomFile(name, 100)),
      }) as unknown as FileSystemEntry;
    const folderEntry = (name: string, children: FileSystemEntry[]) =>
      ({
        name,
        isFile: false,
        isDirectory: true,
        createReader: () => {
          let isRead = false;
          return {
            readEntries: (resolve: (batch: FileSystemEntry[]) => void) => {
              resolve(isRead ? [] : children);
              isRead = true;
            },
          };
        },
      }) as unknown as FileSystemEntry;
    const study = folderEntry('study', [
      fileEntry('.DS_Store'),
      fileEntry('DICOMDIR'),
      folderEntry('SE4', [fileEntry('IM0001'), fileEntry('IM0002')]),
    ]);
    const drop = new Event('drop', { cancelable: true });
    Object.defineProperty(drop, 'dataTransfer', {
      value: { items: [{ kind: 'file', webkitGetAsEntry: () => study }], files: [] },
    });
    element(fixture, '.drop-zone').dispatchEvent(drop);
    await vi.waitFor(() => expect(textOf(fixture)).toContain('3 files in 2 folders chosen'));

    buttonNamed(fixture, 'Upload series').click();
    const request = http.expectOne(uploadRequest);
    expect(
      (request.request.body as FormData).getAll('files').map((file) => (file as File).name),
    ).toEqual(['study/DICOMDIR', 'study/SE4/IM0001', 'study/SE4/IM0002']);
    request.flush(stored('series-1', 4), { status: 201, statusText: 'Created' });
    await fixture.whenStable();
  });

  it('polls the server’s progress every 500 ms once the files are sent, and stops at the answer', async () => {
    await choose([dicomFile('study.zip', 4000)]);
    vi.useFakeTimers();
    buttonNamed(fixture, 'Upload series').click();
    const request = http.expectOne(uploadRequest);
    const token = request.request.params.get('progress') ?? '';
    const pollUrl = `/api/upload-progress/${token}`;

    // Nothing is polled while the bytes are still on their way.
    request.event({ type: HttpEventType.UploadProgress, loaded: 1000, total: 4000 });
    await vi.advanceTimersByTimeAsync(2 * progressPollPeriodMs);
    expect(progressPolls()).toEqual([]);

    request.event({ type: HttpEventType.UploadProgress, loaded: 4000, total: 4000 });
    await vi.advanceTimersByTimeAsync(0);
    // Before the server starts reading, the progress is not known yet.
    http.expectOne(pollUrl).flush(null, { status: 404, statusText: 'Not Found' });
    TestBed.tick();
    expect(textOf(fixture)).toContain('Reading and de-identifying the series');

    await vi.advanceTimersByTimeAsync(progressPollPeriodMs);
    const reading: UploadProgress = {
      stage: 'reading',
      files: { done: 150, total: 600 },
      series: [],
    };
    http.expectOne(pollUrl).flush(reading);
    TestBed.tick();
    expect(textOf(fixture)).toContain('Reading the files and sorting them into series');
    expect(textOf(fixture)).toContain('Files read: 150 of 600');
    expect(progressBars()).toEqual([{ label: 'Files read', value: '25' }]);

    await vi.advanceTimersByTimeAsync(progressPollPeriodMs);
    const decoding: UploadProgress = {
      stage: 'decoding',
      files: { done: 600, total: 600 },
      series: [
        { key: 'k-arterial', description: 'Liver arterial 1.0', done: 155, total: 310 },
        { key: 'k-portal', description: 'Liver portal venous 2.5', done: 31, total: 124 },
      ],
    };
    http.expectOne(pollUrl).flush(decoding);
    TestBed.tick();
    expect(textOf(fixture)).toContain('Decoding and de-identifying the pixels');
    expect(textOf(fixture)).toContain('Liver portal venous 2.5: 31 of 124 slices');
    expect(progressBars()).toEqual([
      { label: 'Files read', value: '100' },
      { label: 'Slices decoded of Liver arterial 1.0', value: '50' },
      { label: 'Slices decoded of Liver portal venous 2.5', value: '25' },
    ]);

    request.flush(listing, { status: 202, statusText: 'Accepted' });
    TestBed.tick();
    await vi.advanceTimersByTimeAsync(4 * progressPollPeriodMs);
    expect(progressPolls()).toEqual([]);
    expect(textOf(fixture)).toContain('This upload holds 3 series');
  });

  it('stops polling when the upload is cancelled', async () => {
    await choose([dicomFile('study.zip', 4000)]);
    vi.useFakeTimers();
    buttonNamed(fixture, 'Upload series').click();
    const request = http.expectOne(uploadRequest);
    request.event({ type: HttpEventType.UploadProgress, loaded: 4000, total: 4000 });
    await vi.advanceTimersByTimeAsync(0);
    const poll = progressPolls();
    expect(poll).toHaveLength(1);
    poll[0].flush({ stage: 'reading', files: { done: 1, total: 9 }, series: [] });
    TestBed.tick();

    buttonNamed(fixture, 'Cancel upload').click();
    TestBed.tick();
    expect(request.cancelled).toBe(true);
    await vi.advanceTimersByTimeAsync(4 * progressPollPeriodMs);
    expect(progressPolls()).toEqual([]);
    expect(textOf(fixture)).toContain('The upload was cancelled; the files are still chosen.');
  });

  it('lists the series of a study and what was not offered, with the portal venous one chosen', async () => {
    await choose([dicomFile('study.zip', 4000)]);
    await answerWithListing();
    const text = textOf(fixture);

    expect(text).toContain('This upload holds 3 series: choose what the board sees');
    expect(text).toContain('Liver arterial 1.0');
    expect(text).toContain('Phase: arterial');
    expect(text).toContain('Phase: portal venous');
    expect(text).toContain('Phase: not stated');
    expect(text).toContain('310');
    expect(text).toContain('1.0 mm');
    expect(text).toContain('2.5 mm');
    expect(text).toContain('coronal');
    expect(text).toContain('512 × 400');
    expect(text).toContain('JPEG 2000 Image Compression');
    // The note appears once: only the portal venous series is lossy.
    expect(text.split(lossyCompressionNote)).toHaveLength(2);
    expect(text).toContain('Dose report — a structured report, not an image series');
    expect(text).toContain('Localizer (CT) — a scout view of 2 slices');
    const expires = new Date(listing.expiresAt);
    const localTime = [expires.getHours(), expires.getMinutes()]
      .map((part) => String(part).padStart(2, '0'))
      .join(':');
    expect(text).toContain(`holds the upload until ${localTime}`);

    expect(checkbox('Liver portal venous 2.5').checked).toBe(true);
    expect(checkbox('Liver arterial 1.0').checked).toBe(false);
    expect(checkbox('Abdomen coronal').checked).toBe(false);
    expect(buttonNamed(fixture, 'Keep 1 series').disabled).toBe(false);
  });

  it('chooses nothing at first when no single series is portal venous', async () => {
    await choose([dicomFile('study.zip', 4000)]);
    buttonNamed(fixture, 'Upload series').click();
    const twoPortal: UploadListing = {
      ...listing,
      series: [
        candidate({ key: 'a', description: 'PV early', phaseHint: 'portal venous' }),
        candidate({ key: 'b', description: 'PV late', phaseHint: 'portal venous' }),
      ],
    };
    http.expectOne(uploadRequest).flush(twoPortal, { status: 202, statusText: 'Accepted' });
    await fixture.whenStable();

    expect(checkbox('PV early').checked).toBe(false);
    expect(checkbox('PV late').checked).toBe(false);
    expect(buttonNamed(fixture, 'Keep series').disabled).toBe(true);
  });

  it('keeps the chosen series, hands each on and says what was stored', async () => {
    await choose([dicomFile('study.zip', 4000)]);
    await answerWithListing();
    checkbox('Liver arterial 1.0').click();
    await fixture.whenStable();

    vi.useFakeTimers();
    buttonNamed(fixture, 'Keep 2 series').click();
    const request = http.expectOne(keepRequest);
    // In the listing's order, whatever order the boxes were ticked in.
    expect(request.request.body).toEqual({ keys: ['k-arterial', 'k-portal'] });
    const token = request.request.params.get('progress') ?? '';
    expect(token).toMatch(uuidV4);

    // The keep has no transfer to wait for: its progress is polled at once.
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne(`/api/upload-progress/${token}`).flush({
      stage: 'decoding',
      files: { done: 0, total: 0 },
      series: [{ key: 'k-arterial', description: 'Liver arterial 1.0', done: 62, total: 310 }],
    } satisfies UploadProgress);
    TestBed.tick();
    expect(progressBars()).toEqual([
      { label: 'Slices decoded of Liver arterial 1.0', value: '20' },
    ]);

    const lossy: SeriesCompression = {
      transferSyntaxUid: '1.2.840.10008.1.2.4.91',
      transferSyntaxName: 'JPEG 2000 Image Compression',
      isLossy: true,
      lossyRatio: 10,
      lossyMethod: 'ISO_15444_1',
    };
    request.flush([stored('series-3', 3), stored('series-4', 4, lossy)], {
      status: 201,
      statusText: 'Created',
    });
    TestBed.tick();
    await vi.advanceTimersByTimeAsync(4 * progressPollPeriodMs);
    expect(progressPolls()).toEqual([]);

    expect(uploaded.map((series) => series.id)).toEqual(['series-3', 'series-4']);
    const text = textOf(fixture);
    expect(text).toContain('Stored: series 3, CT, 124 slices.');
    expect(text).toContain(
      `Stored: series 4, CT, 124 slices. ${lossyCompressionNote} Compression ratio 10:1.`,
    );
    expect(text).not.toContain('This upload holds');
    expect(text).toContain('No file chosen.');
  });

  it('says the upload was forgotten when the server no longer holds it', async () => {
    await choose([dicomFile('study.zip', 4000)]);
    await answerWithListing();
    vi.useFakeTimers();
    buttonNamed(fixture, 'Keep 1 series').click();
    const expired: ProblemDetails = {
      type: 'about:blank',
      title: 'Not Found',
      status: 404,
      detail: 'No such upload.',
    };
    http.expectOne(keepRequest).flush(expired, { status: 404, statusText: 'Not Found' });
    TestBed.tick();

    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'The server no longer holds the upload (it waited too long for a choice); send it again.',
    );
    expect(textOf(fixture)).not.toContain('This upload holds');
    expect(textOf(fixture)).toContain('1 file chosen');
    expect(uploaded).toEqual([]);
  });

  it('discards the upload after a confirmation that nothing will be stored', async () => {
    await choose([dicomFile('study.zip', 4000)]);
    await answerWithListing();

    buttonNamed(fixture, 'Discard the upload').click();
    expect(dialogData).toHaveLength(1);
    expect(dialogData[0].message).toContain('Nothing of this upload will be stored');
    const request = http.expectOne({ method: 'DELETE', url: '/api/uploads/upload-7' });
    request.flush(null, { status: 204, statusText: 'No Content' });
    await fixture.whenStable();

    expect(textOf(fixture)).toContain('The upload was discarded; nothing was stored.');
    expect(textOf(fixture)).not.toContain('This upload holds');
    expect(uploaded).toEqual([]);
  });

  it('has no accessibility violations that axe finds', async () => {
    await choose([dicomFile('a.dcm', 10)]);
    // jsdom lays nothing out, so contrast is left to the end-to-end run in a real browser.
    const result = await axe.run(fixture.nativeElement as HTMLElement, {
      rules: { 'color-contrast': { enabled: false } },
    });
    expect(result.violations.map((violation) => violation.id)).toEqual([]);
  });

  it('has no accessibility violations that axe finds in the choice of series', async () => {
    await choose([dicomFile('study.zip', 4000)]);
    await answerWithListing();
    const result = await axe.run(fixture.nativeElement as HTMLElement, {
      rules: { 'color-contrast': { enabled: false } },
    });
    expect(result.violations.map((violation) => violation.id)).toEqual([]);
  });
});
