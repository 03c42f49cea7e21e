import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { BoardView, Specialty } from '@emberline/shared';
import { textOf } from '../../testing/dom';
import { BoardQuorumEditor } from './board-quorum-editor';

// An invented board.
const board: BoardView = {
  id: 'board-1',
  name: 'Liver board',
  description: '',
  memberCount: 4,
  mySpecialty: null,
  requiredSpecialties: ['hepatology'],
};

describe('BoardQuorumEditor', () => {
  let fixture: ComponentFixture<BoardQuorumEditor>;
  let http: HttpTestingController;

  /** Picks specialties as the select's change does. */
  function choose(value: Specialty[]): void {
    (fixture.componentInstance as unknown as { choose(value: Specialty[]): void }).choose(value);
  }

  function saveButton(): HTMLButtonElement {
    const button = (fixture.nativeElement as HTMLElement).querySelector<HTMLButtonElement>(
      'button[aria-label="Save the quorum of Liver board"]',
    );
    if (!button) throw new Error('No save button');
    return button;
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [BoardQuorumEditor],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(BoardQuorumEditor);
    fixture.componentRef.setInput('board', board);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  it('offers no save until the choice differs from what is saved', async () => {
    expect(saveButton().disabled).toBe(true);
    choose(['hepatology']);
    await fixture.whenStable();
    expect(saveButton().disabled).toBe(true);
    choose(['hepatology', 'pathology']);
    await fixture.whenStable();
    expect(saveButton().disabled).toBe(false);
  });

  it('saves the chosen specialties in the list order with the quorum route', async () => {
    choose(['pathology', 'hepatology', 'interventional-radiology']);
    await fixture.whenStable();
    saveButton().click();
    const request = http.expectOne('/api/admin/boards/board-1/quorum');
    expect(request.request.method).toBe('PUT');
    // The order of `specialties` in the shared roles module.
    expect(request.request.body).toEqual({
      requiredSpecialties: ['interventional-radiology', 'hepatology', 'pathology'],
    });
    request.flush({
      requiredSpecialties: ['interventional-radiology', 'hepatology', 'pathology'],
    });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Saved.');
    expect(saveButton().disabled).toBe(true);
  });

  it('shows the server detail when the quorum is refused', async () => {
    choose([]);
    await fixture.whenStable();
    saveButton().click();
    http.expectOne('/api/admin/boards/board-1/quorum').flush(
      {
        type: 'about:blank',
        title: 'Bad request',
        status: 400,
        detail: 'A specialty appears twice',
      },
      { status: 400, statusText: 'Bad Request' },
    );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('The quorum was not saved: A specialty appears twice');
    expect(saveButton().disabled).toBe(false);
  });
});
