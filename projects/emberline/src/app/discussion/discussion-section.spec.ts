import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type {
  AgendaItemVotes,
  AnnotationView,
  CommentView,
  ImageSeriesView,
  PlanView,
} from '@emberline/shared';
import { CaseFileState } from '../cases/case-file-state';
import { textOf } from '../../testing/dom';
import { DiscussionSection } from './discussion-section';

// Invented demo data: one case, one series, one plan, one meeting.
const caseId = 'case-1';
const planId = '7d1f0c2e-8a4b-4c3d-9e5f-102030405060';
const series = { id: 'series-1', seriesNumber: 3, modality: 'CT' } as ImageSeriesView;
const plan = { id: planId, name: 'Anterior subcostal' } as PlanView;
const person = (displayName: string) => ({ id: `id-${displayName}`, displayName });

const annotation: AnnotationView = {
  id: 'annotation-1',
  caseId,
  seriesId: 'series-1',
  kind: 'note',
  points: [[10, 20, 30]],
  text: 'Abuts the middle hepatic vein',
  author: person('Dr Okafor'),
  meetingId: 'meeting-1',
  createdAt: '2026-12-09T15:10:00.000Z',
  updatedAt: '2026-12-09T15:10:00.000Z',
};

function comment(id: string, body: string, parentId: string | null, isForMinutes = false) {
  return {
    id,
    agendaItemId: 'item-1',
    caseId,
    parentId,
    author: person(id === 'c1' ? 'Dr Lindqvist' : 'Dr Mensah'),
    body,
    isForMinutes,
    createdAt: id === 'c1' ? '2026-12-09T15:12:00.000Z' : '2026-12-09T15:14:00.000Z',
  } satisfies CommentView;
}

const agendaItem: AgendaItemVotes = {
  agendaItemId: 'item-1',
  meetingId: 'meeting-1',
  meetingStartsAt: '2026-12-09T15:00:00.000Z',
  isClosed: true,
  votes: [
    {
      option: planId,
      position: 'support',
      comment: 'Clear path',
      voter: person('Dr Okafor'),
      castAt: '2026-12-09T15:20:00.000Z',
    },
    {
      option: 'sbrt',
      position: 'oppose',
      comment: null,
      voter: person('Dr Mensah'),
      castAt: '2026-12-09T15:21:00.000Z',
    },
  ],
};

describe('DiscussionSection', () => {
  let fixture: ComponentFixture<DiscussionSection>;
  let http: HttpTestingController;

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [DiscussionSection],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: CaseFileState, useValue: { caseId: signal(caseId), detail: signal(undefined) } },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(DiscussionSection);
    fixture.detectChanges();
    await new Promise((resolve) => setTimeout(resolve));
    TestBed.tick();
  });

  afterEach(() => http.verify());

  async function answer(
    annotations: AnnotationView[],
    comments: CommentView[],
    votes: AgendaItemVotes[],
  ): Promise<void> {
    http.expectOne(`/api/cases/${caseId}/key-images`).flush([]);
    http.expectOne(`/api/cases/${caseId}/annotations`).flush(annotations);
    http.expectOne(`/api/cases/${caseId}/comments`).flush(comments);
    http.expectOne(`/api/cases/${caseId}/votes`).flush(votes);
    http.expectOne(`/api/cases/${caseId}/series`).flush([series]);
    http.expectOne(`/api/cases/${caseId}/plans`).flush([plan]);
    await fixture.whenStable();
  }

  it('says in words that nothing was annotated, said or voted yet', async () => {
    await answer([], [], []);

    const text = textOf(fixture);
    expect(text).toContain("Nobody has annotated this case's images yet.");
    expect(text).toContain('No comment has been posted about this case yet.');
    expect(text).toContain('No vote has been cast on this case yet.');
  });

  it('lists an annotation with its kind, series, text, author and time', async () => {
    await answer([annotation], [], []);

    const entry = (fixture.nativeElement as HTMLElement).querySelector('[data-annotation]');
    const text = entry?.textContent?.replace(/\s+/g, ' ') ?? '';
    expect(text).toContain('Note');
    expect(text).toContain('Series 3 · CT');
    expect(text).toContain('Abuts the middle hepatic vein');
    expect(text).toContain('Dr Okafor');
    expect(entry?.querySelector('time')?.getAttribute('datetime')).toBe(annotation.createdAt);
  });

  it('threads an answer under its comment, under the meeting, with the minutes mark', async () => {
    await answer(
      [],
      [
        comment('c2', 'Agreed, 2 cm from the vein', 'c1'),
        comment('c1', 'Ablation first?', null, true),
      ],
      [agendaItem],
    );

    const root = fixture.nativeElement as HTMLElement;
    const first = root.querySelector('[data-comment="c1"]');
    expect(first?.querySelector('.replies [data-comment="c2"]')).not.toBeNull();
    expect(first?.querySelector(':scope > .byline')?.textContent).toContain('For the minutes');
    expect(root.querySelector('[data-comment="c2"] .byline')?.textContent).not.toContain(
      'For the minutes',
    );
    expect(
      root.querySelector('[data-agenda-item="item-1"] h3 time')?.getAttribute('datetime'),
    ).toBe(agendaItem.meetingStartsAt);
  });

  it('lists each vote with voter, option by name, position, comment and time', async () => {
    await answer([], [], [agendaItem]);

    const rows = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('table.votes tbody tr'),
    ).map((row) =>
      Array.from(row.querySelectorAll('td')).map((cell) => cell.textContent?.trim() ?? ''),
    );
    expect(rows.map((cells) => cells.slice(0, 4))).toEqual([
      ['Dr Okafor', 'Plan: Anterior subcostal', 'Support', 'Clear path'],
      ['Dr Mensah', 'Stereotactic body radiotherapy (SBRT)', 'Oppose', ''],
    ]);
    expect(textOf(fixture)).toContain('voting closed');
  });

  it('shows a failed read beside its list, with the problem’s words, and tries again', async () => {
    http
      .expectOne(`/api/cases/${caseId}/votes`)
      .flush(
        { type: 'about:blank', title: 'Forbidden', status: 403, detail: 'Not on this board.' },
        { status: 403, statusText: 'Forbidden' },
      );
    http.expectOne(`/api/cases/${caseId}/key-images`).flush([]);
    http.expectOne(`/api/cases/${caseId}/annotations`).flush([]);
    http.expectOne(`/api/cases/${caseId}/comments`).flush([]);
    http.expectOne(`/api/cases/${caseId}/series`).flush([]);
    http.expectOne(`/api/cases/${caseId}/plans`).flush([]);
    await fixture.whenStable();

    expect(textOf(fixture)).toContain('The votes could not be loaded. Not on this board.');
    const retry = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll(
        'section[aria-labelledby="votes-title"] button',
      ),
    ).find((button) => button.textContent?.includes('Try again')) as HTMLButtonElement;
    retry.click();
    await new Promise((resolve) => setTimeout(resolve));
    TestBed.tick();
    http.expectOne(`/api/cases/${caseId}/votes`).flush([agendaItem]);
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Dr Okafor');
  });
});
