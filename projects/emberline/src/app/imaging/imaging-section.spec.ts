import { provideHttpClient } from '@angular/common/http';
import {
  HttpTestingController,
  provideHttpClientTesting,
  type TestRequest,
} from '@angular/common/http/testing';
import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import {
  lossyCompressionNote,
  type CaseDetail,
  type ImageSeriesView,
  type SeriesCompression,
} from '@emberline/shared';
import { textOf } from '../../testing/dom';
import { CaseFileState } from '../cases/case-file-state';
import { ImagingSection } from './imaging-section';

// Invented demo data: one case, two series of it.
const caseId = 'case-1';

/**
 * Transfer syntaxes from DICOM PS3.6 Table A-1, from memory [M]: 1.2.840.10008.1.2.4.91 JPEG
 * 2000 Image Compression, 1.2.840.10008.1.2.1 Explicit VR Little Endian.
 */
const lossyJpeg2000: SeriesCompression = {
  transferSyntaxUid: '1.2.840.10008.1.2.4.91',
  transferSyntaxName: 'JPEG 2000 Image Compression',
  isLossy: true,
  lossyRatio: 10,
  lossyMethod: 'ISO_15444_1',
};
const uncompressed: SeriesCompression = {
  transferSyntaxUid: '1.2.840.10008.1.2.1',
  transferSyntaxName: 'Explicit VR Little Endian',
  isLossy: false,
  lossyRatio: null,
  lossyMethod: null,
};

function series(id: string, seriesNumber: number, compression: SeriesCompression | null) {
  return {
    id,
    caseId,
    modality: 'CT',
    dimensions: [512, 512, 124],
    spacingMm: [0.7, 0.7, 2.5],
    sliceCount: 124,
    seriesNumber,
    compression,
    uploadedBy: { id: 'u1', displayName: 'Dr Demo' },
    createdAt: '2026-12-01T09:00:00.000Z',
  } as ImageSeriesView;
}

describe('ImagingSection', () => {
  let fixture: ComponentFixture<ImagingSection>;
  let http: HttpTestingController;

  /** The panel of the series headed "Series <number> · CT". */
  function panel(seriesNumber: number): HTMLElement {
    const panels = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll<HTMLElement>('section.series'),
    );
    const found = panels.find((candidate) =>
      candidate.querySelector('h2')?.textContent?.includes(`Series ${seriesNumber} `),
    );
    if (!found) throw new Error(`No panel for series ${seriesNumber}`);
    return found;
  }

  function panelText(seriesNumber: number): string {
    return (panel(seriesNumber).textContent ?? '').replace(/\s+/g, ' ');
  }

  /** The value of the fact `label` of a series, or null when it has none. */
  function fact(seriesNumber: number, label: string): string | null {
    const terms = Array.from(panel(seriesNumber).querySelectorAll('dt'));
    const term = terms.find((candidate) => candidate.textContent?.trim() === label);
    return term?.nextElementSibling?.textContent?.trim() ?? null;
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [ImagingSection],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        {
          provide: CaseFileState,
          useValue: {
            caseId: signal(caseId),
            detail: signal({
              id: caseId,
              permissions: { canEdit: false },
              lesions: [],
            } as unknown as CaseDetail),
          },
        },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(ImagingSection);
    fixture.detectChanges();
    // Let the resource issue its request (whenStable would wait for its answer).
    await new Promise((resolve) => setTimeout(resolve));
    http
      .expectOne(`/api/cases/${caseId}/series`)
      .flush([
        series('s-4', 4, lossyJpeg2000),
        series('s-5', 5, uncompressed),
        series('s-6', 6, null),
      ]);
    // The structures of each series are not what these tests are about: answered empty once
    // each panel has asked.
    const structureRequests: TestRequest[] = [];
    await vi.waitFor(() => {
      structureRequests.push(...http.match((found) => found.url.endsWith('/structures')));
      expect(structureRequests).toHaveLength(3);
    });
    for (const request of structureRequests) request.flush([]);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  it('shows the lossy note with its ratio on a lossy series only', () => {
    expect(panelText(4)).toContain(`${lossyCompressionNote} Compression ratio 10:1.`);
    expect(panelText(5)).not.toContain(lossyCompressionNote);
    expect(panelText(6)).not.toContain(lossyCompressionNote);
    expect(textOf(fixture).split(lossyCompressionNote)).toHaveLength(2);
  });

  it('names the transfer syntax among the facts of a series that recorded it', () => {
    expect(fact(4, 'Transfer syntax')).toBe('JPEG 2000 Image Compression');
    expect(fact(5, 'Transfer syntax')).toBe('Explicit VR Little Endian');
    expect(fact(6, 'Transfer syntax')).toBeNull();
  });
});
