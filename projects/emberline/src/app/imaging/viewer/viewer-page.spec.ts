import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { CaseFileState } from '../../cases/case-file-state';
import { textOf } from '../../../testing/dom';
import { ViewerPage } from './viewer-page';
import { hasWebGl2 } from './webgl-support';

describe('ViewerPage without WebGL2', () => {
  it('says why the images cannot be drawn instead of failing, and loads no voxels', async () => {
    // happy-dom has no WebGL2, like a browser with it switched off.
    expect(hasWebGl2()).toBe(false);
    await TestBed.configureTestingModule({
      imports: [ViewerPage],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        {
          provide: CaseFileState,
          useValue: { caseId: signal('case-1'), detail: signal(undefined) },
        },
      ],
    }).compileComponents();
    const http = TestBed.inject(HttpTestingController);
    const fixture = TestBed.createComponent(ViewerPage);
    fixture.componentRef.setInput('seriesId', 'series-1');
    fixture.detectChanges();

    expect(textOf(fixture)).toContain('This browser gives no WebGL2 context');
    expect(http.match((request) => request.url.includes('/volume'))).toEqual([]);
    expect(http.match((request) => request.url.includes('/label-map'))).toEqual([]);
    expect(fixture.nativeElement.querySelector('canvas')).toBeNull();
  });
});

describe('ViewerPage embedded outside the case file', () => {
  it('reads the plans of the case its host names and offers no way back to a case file', async () => {
    // The meeting room gives the case and the right to draft itself: no CaseFileState there.
    await TestBed.configureTestingModule({
      imports: [ViewerPage],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
      ],
    }).compileComponents();
    const http = TestBed.inject(HttpTestingController);
    const fixture = TestBed.createComponent(ViewerPage);
    fixture.componentRef.setInput('seriesId', 'series-1');
    fixture.componentRef.setInput('caseId', 'case-9');
    fixture.componentRef.setInput('canEdit', false);
    fixture.detectChanges();
    // Let the resources issue their requests (whenStable would wait for their answers).
    await new Promise((resolve) => setTimeout(resolve));
    TestBed.tick();

    expect(http.match((request) => request.url === '/api/cases/case-9/plans')).toHaveLength(1);
    expect(textOf(fixture)).not.toContain('Back to the imaging');
  });
});
