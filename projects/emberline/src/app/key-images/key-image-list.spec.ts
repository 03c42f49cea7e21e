import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatDialog } from '@angular/material/dialog';
import type { KeyImageView } from '@emberline/shared';
import { of } from 'rxjs';
import { textOf } from '../../testing/dom';
import { ConfirmDialog } from '../core/confirm-dialog';
import { KeyImageDialog } from './key-image-dialog';
import { KeyImageList } from './key-image-list';

// Invented demo data: one case, one series, two people.
const caseId = 'case-1';
const person = (displayName: string) => ({ id: `id-${displayName}`, displayName });

function keyImage(id: string, author: string, createdAt: string, canDelete: boolean): KeyImageView {
  return {
    id,
    caseId,
    seriesId: 'series-1',
    pane: id === 'k2' ? '3d' : 'axial',
    caption: id === 'k1' ? 'Tumour abutting the portal branch' : null,
    viewState: {
      cursorLps: [1, 2, 3],
      sliceIndex: id === 'k2' ? null : 41,
      window: { width: 400, level: 50 },
      camera: null,
      hiddenLabels: [],
      labelOpacity: 0.45,
      planId: null,
      zones: [],
    },
    widthPx: 640,
    heightPx: 480,
    bytes: 12_345,
    author: person(author),
    createdAt,
    imageUrl: `/api/key-images/${id}/image.png`,
    canDelete,
  };
}

// The server's answer for Dr Okafor: their own image may be removed, Dr Mensah's not.
const own = keyImage('k1', 'Dr Okafor', '2026-12-09T15:10:00.000Z', true);
const others = keyImage('k2', 'Dr Mensah', '2026-12-09T15:05:00.000Z', false);

describe('KeyImageList', () => {
  let fixture: ComponentFixture<KeyImageList>;
  let http: HttpTestingController;
  let confirmAnswer: boolean;
  const opened: unknown[] = [];

  beforeEach(async () => {
    confirmAnswer = true;
    opened.length = 0;
    await TestBed.configureTestingModule({
      imports: [KeyImageList],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        {
          provide: MatDialog,
          useValue: {
            open: (component: unknown) => {
              opened.push(component);
              return { afterClosed: () => of(confirmAnswer) };
            },
          },
        },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(KeyImageList);
    fixture.componentRef.setInput('caseId', caseId);
    fixture.componentRef.setInput('seriesLabel', () => 'Series 3 · CT');
    fixture.detectChanges();
    await new Promise((resolve) => setTimeout(resolve));
    TestBed.tick();
  });

  afterEach(() => http.verify());

  const root = () => fixture.nativeElement as HTMLElement;
  const entry = (id: string) => root().querySelector(`[data-key-image="${id}"]`);

  async function answer(images: KeyImageView[]): Promise<void> {
    http.expectOne(`/api/cases/${caseId}/key-images`).flush(images);
    await fixture.whenStable();
  }

  it('says in words that no key image was kept', async () => {
    await answer([]);
    expect(textOf(fixture)).toContain('No key image has been kept yet.');
  });

  it('lists oldest first with thumbnail, caption, pane, series, author and time', async () => {
    await answer([own, others]);
    const ids = Array.from(root().querySelectorAll('[data-key-image]')).map((li) =>
      li.getAttribute('data-key-image'),
    );
    expect(ids).toEqual(['k2', 'k1']);
    const first = entry('k1');
    const text = first?.textContent?.replace(/\s+/g, ' ') ?? '';
    expect(text).toContain('Tumour abutting the portal branch');
    expect(text).toContain('Axial view · Series 3 · CT');
    expect(text).toContain('Dr Okafor');
    expect(first?.querySelector('img')?.getAttribute('src')).toBe('/api/key-images/k1/image.png');
    expect(first?.querySelector('time')?.getAttribute('datetime')).toBe(own.createdAt);
    expect(entry('k2')?.textContent).toContain('No caption.');
    expect(entry('k2')?.textContent).toContain('3D view');
  });

  it('offers Remove only on the images the server says the reader may remove (the author’s)', async () => {
    await answer([own, others]);
    expect(entry('k1')?.querySelector('[data-remove-key-image]')).not.toBeNull();
    expect(entry('k2')?.querySelector('[data-remove-key-image]')).toBeNull();
  });

  it('asks first, then removes and reads the list again', async () => {
    await answer([own, others]);
    (entry('k1')?.querySelector('[data-remove-key-image]') as HTMLButtonElement).click();
    expect(opened).toEqual([ConfirmDialog]);
    const removal = http.expectOne('/api/key-images/k1');
    expect(removal.request.method).toBe('DELETE');
    removal.flush(null, { status: 204, statusText: 'No Content' });
    await new Promise((resolve) => setTimeout(resolve));
    TestBed.tick();
    http.expectOne(`/api/cases/${caseId}/key-images`).flush([others]);
    await fixture.whenStable();
    expect(entry('k1')).toBeNull();
  });

  it('removes nothing when the confirmation is declined', async () => {
    confirmAnswer = false;
    await answer([own]);
    (entry('k1')?.querySelector('[data-remove-key-image]') as HTMLButtonElement).click();
    http.expectNone('/api/key-images/k1');
    expect(entry('k1')).not.toBeNull();
  });

  it('shows a refused removal in the server’s words', async () => {
    await answer([own]);
    (entry('k1')?.querySelector('[data-remove-key-image]') as HTMLButtonElement).click();
    http
      .expectOne('/api/key-images/k1')
      .flush(
        { type: 'about:blank', title: 'Conflict', status: 409, detail: 'The case is decided.' },
        { status: 409, statusText: 'Conflict' },
      );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('The key image was not removed. The case is decided.');
  });

  it('opens a thumbnail at full size', async () => {
    await answer([own]);
    (entry('k1')?.querySelector('button.thumbnail') as HTMLButtonElement).click();
    expect(opened).toEqual([KeyImageDialog]);
  });
});
