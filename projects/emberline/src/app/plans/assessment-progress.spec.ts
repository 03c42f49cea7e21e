import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { AssessmentView, WatchAcknowledgement } from '@emberline/shared';
import { Subject } from 'rxjs';
import { textOf } from '../../testing/dom';
import { RealtimeSession, type RealtimeConnection } from '../core/realtime-session';
import { AssessmentProgress, assessmentPollIntervalMs } from './assessment-progress';

const id = '5d4c3b2a-1908-4f7e-8d6c-5b4a39281706';
const url = `/api/assessments/${id}`;

function view(overrides: Partial<AssessmentView> = {}): AssessmentView {
  return {
    id,
    planId: 'plan-1',
    status: 'queued',
    progress: 0,
    inputs: null,
    createdAt: '2026-11-20T10:00:00.000Z',
    updatedAt: '2026-11-20T10:00:00.000Z',
    ...overrides,
  };
}

describe('AssessmentProgress', () => {
  let fixture: ComponentFixture<AssessmentProgress>;
  let http: HttpTestingController;
  let live: Subject<WatchAcknowledgement>;
  /** The realtime session as the component sees it: a connection state and a stream a watch. */
  let realtime: {
    connection: ReturnType<typeof signal<RealtimeConnection>>;
    watchAssessment: (assessmentId: string) => Subject<WatchAcknowledgement>;
    watches: string[];
  };
  let settled: AssessmentView[];

  function bar(): HTMLElement {
    const found = (fixture.nativeElement as HTMLElement).querySelector<HTMLElement>(
      'mat-progress-bar',
    );
    if (!found) throw new Error('No progress bar');
    return found;
  }

  beforeEach(async () => {
    live = new Subject<WatchAcknowledgement>();
    realtime = {
      connection: signal<RealtimeConnection>('connecting'),
      watches: [],
      watchAssessment: (assessmentId: string) => {
        realtime.watches.push(assessmentId);
        return live;
      },
    };
    await TestBed.configureTestingModule({
      imports: [AssessmentProgress],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: RealtimeSession, useValue: realtime },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(AssessmentProgress);
    settled = [];
    fixture.componentInstance.settled.subscribe((finished) => settled.push(finished));
    fixture.componentRef.setInput('assessment', view());
    await fixture.whenStable();
  });

  afterEach(() => {
    vi.useRealTimers();
    http.verify();
  });

  it('waits in the queue with an indeterminate bar, then follows stage and share from the socket', async () => {
    expect(realtime.watches).toEqual([id]);
    expect(textOf(fixture)).toContain('Queued');
    expect(bar().getAttribute('mode')).toBe('indeterminate');

    live.next({
      ok: true,
      event: { id, planId: 'plan-1', status: 'running', progress: 0.45, stage: 'Distance fields' },
    });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Running · Measuring distances to vessels and organs 45 %');
    expect(bar().getAttribute('mode')).toBe('determinate');
    expect(bar().getAttribute('aria-valuenow')).toBe('45');
    expect(textOf(fixture)).toContain(
      'Assessment running: Measuring distances to vessels and organs',
    );
  });

  it('never runs the bar backwards when an older event arrives late', async () => {
    live.next({ ok: true, event: { id, planId: 'plan-1', status: 'running', progress: 0.6 } });
    live.next({ ok: true, event: { id, planId: 'plan-1', status: 'running', progress: 0.3 } });
    live.next({ ok: true, event: { id, planId: 'plan-1', status: 'queued', progress: 0 } });
    await fixture.whenStable();
    expect(bar().getAttribute('aria-valuenow')).toBe('60');
  });

  it('reads the whole assessment once the socket says it is done, and hands it on', async () => {
    live.next({ ok: true, event: { id, planId: 'plan-1', status: 'done', progress: 1 } });
    const finished = view({ status: 'done', progress: 1, updatedAt: '2026-11-20T10:02:00.000Z' });
    http.expectOne(url).flush(finished);
    await fixture.whenStable();
    expect(settled).toEqual([finished]);
    expect(live.observed).toBe(false);
  });

  it('reads the state every 2 s while the socket cannot connect, and stops when the run ends', async () => {
    vi.useFakeTimers();
    realtime.connection.set('unavailable');
    TestBed.tick();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne(url).flush(view({ status: 'running', progress: 0.2 }));
    TestBed.tick();
    expect(textOf(fixture)).toContain('the state is read every 2 s instead');
    expect(bar().getAttribute('aria-valuenow')).toBe('20');

    await vi.advanceTimersByTimeAsync(assessmentPollIntervalMs - 1);
    http.expectNone(url);
    await vi.advanceTimersByTimeAsync(1);
    const finished = view({ status: 'done', progress: 1, updatedAt: '2026-11-20T10:02:00.000Z' });
    http.expectOne(url).flush(finished);
    TestBed.tick();
    expect(settled).toEqual([finished]);

    await vi.advanceTimersByTimeAsync(3 * assessmentPollIntervalMs);
    http.expectNone(url);
  });

  it('stops polling once the socket is back', async () => {
    vi.useFakeTimers();
    realtime.connection.set('unavailable');
    TestBed.tick();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne(url).flush(view({ status: 'running', progress: 0.2 }));

    realtime.connection.set('connected');
    TestBed.tick();
    await vi.advanceTimersByTimeAsync(3 * assessmentPollIntervalMs);
    http.expectNone(url);
  });

  it('falls back to reading the state when the watch is refused, and says why', async () => {
    vi.useFakeTimers();
    live.next({ ok: false, status: 503, detail: 'The realtime service is busy.' });
    TestBed.tick();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne(url).flush(view({ status: 'running', progress: 0.5 }));
    TestBed.tick();
    expect(textOf(fixture)).toContain(
      'Live progress is not available: The realtime service is busy.',
    );
    expect(bar().getAttribute('aria-valuenow')).toBe('50');
  });

  it('shows why a run failed', async () => {
    live.next({
      ok: true,
      event: {
        id,
        planId: 'plan-1',
        status: 'failed',
        progress: 0.3,
        error: 'No liver is labelled.',
      },
    });
    http
      .expectOne(url)
      .flush(view({ status: 'failed', progress: 0.3, error: 'No liver is labelled.' }));
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('The assessment failed. No liver is labelled.');
    expect(settled).toHaveLength(1);
  });
});
