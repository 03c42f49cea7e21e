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
