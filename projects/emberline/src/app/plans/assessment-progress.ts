import { HttpErrorResponse } from '@angular/common/http';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  inject,
  input,
  output,
  signal,
} from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { MatProgressBar, type ProgressBarMode } from '@angular/material/progress-bar';
import type { AssessmentProgressEvent, AssessmentStatus, AssessmentView } from '@emberline/shared';
import {
  BehaviorSubject,
  EMPTY,
  Subject,
  catchError,
  combineLatest,
  distinctUntilChanged,
  exhaustMap,
  filter,
  map,
  merge,
  of,
  switchMap,
  take,
  takeUntil,
  tap,
  timer,
  type Observable,
} from 'rxjs';
import { problemMessage } from '../core/problem';
import { RealtimeSession, type RealtimeConnection } from '../core/realtime-session';
import { AssessmentApi } from './assessment-api';
import { stageInWords } from './assessment-stage-words';
import { isFinished } from './plan-assessments';

export const assessmentStatusLabels: Record<AssessmentStatus, string> = {
  queued: 'Queued',
  running: 'Running',
  done: 'Done',
  failed: 'Failed',
};

/** How often the state is read over HTTP while the socket cannot connect. */
export const assessmentPollIntervalMs = 2_000;

type Update = AssessmentProgressEvent | AssessmentView;

const statusRank: Record<AssessmentStatus, number> = { queued: 0, running: 1, done: 2, failed: 2 };

/**
 * One assessment's live state: status, stage and a progress bar. Follows the assessment over
 * the realtime session; while the socket cannot connect (or the watch is refused) it reads
 * GET /api/assessments/:id every 2 s instead. When the run ends it reads the whole assessment
 * once and emits it as `settled`.
 */
@Component({
  selector: 'em-assessment-progress',
  imports: [MatProgressBar],
  templateUrl: './assessment-progress.html',
  styleUrl: './assessment-progress.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AssessmentProgress {
  private readonly realtime = inject(RealtimeSession);
  private readonly api = inject(AssessmentApi);

  readonly assessment = input.required<AssessmentView>();
  /** The whole assessment once it is done or failed. */
  readonly settled = output<AssessmentView>();

  private readonly live = signal<AssessmentProgressEvent | null>(null);
  protected readonly isPolling = signal(false);
  /** Why the socket does not follow this assessment (the polling does instead). */
  protected readonly watchProblem = signal('');
  /** Why the state could not be read over HTTP; cleared by the next good read. */
  protected readonly problem = signal('');
  protected readonly statusLabels = assessmentStatusLabels;

  /** The latest known state: the input, or what arrived since. */
  protected readonly current = computed<AssessmentProgressEvent>(() => {
    const view = this.assessment();
    const live = this.live();
    const given = toEvent(view);
    return live && live.id === view.id ? later(given, live) : given;
  });
  protected readonly percent = computed(() =>
    Math.round(Math.min(1, Math.max(0, this.current().progress)) * 100),
  );
  protected readonly mode = computed<ProgressBarMode>(() =>
    this.current().status === 'queued' ? 'indeterminate' : 'determinate',
  );
  /** Read out on changes of status or stage, not on every percent. */
  protected readonly announcement = computed(() => {
    const { status } = this.current();
    const stage = this.stageWords();
    return `Assessment ${this.statusLabels[status].toLowerCase()}${stage ? `: ${stage}` : ''}`;
  });
  /** The step under way in clinical words; empty when the server named none. */
  protected readonly stageWords = computed(() => {
    const stage = this.current().stage;
    return stage ? stageInWords(stage) : '';
  });

  private readonly followedId = computed(() => {
    const view = this.assessment();
    return isFinished(view) ? null : view.id;
  });

  constructor() {
    const connection$ = toObservable(this.realtime.connection);
    toObservable(this.followedId)
      .pipe(
        switchMap((id) => (id ? this.follow(id, connection$) : EMPTY)),
        takeUntilDestroyed(),
      )
      .subscribe((view) => this.settled.emit(view));
  }

  private follow(
    id: string,
    connection$: Observable<RealtimeConnection>,
  ): Observable<AssessmentView> {
    this.live.set(null);
    this.problem.set('');
    this.watchProblem.set('');
    const isRefused$ = new BehaviorSubject(false);
    const stopPolling$ = new Subject<void>();
    const live$ = this.realtime.watchAssessment(id).pipe(
      tap((acknowledgement) => {
        if (acknowledgement.ok) return;
        this.watchProblem.set(`Live progress is not available: ${acknowledgement.detail}`);
        isRefused$.next(true);
      }),
      filter((acknowledgement) => acknowledgement.ok),
      map((acknowledgement) => acknowledgement.event),
    );
    const poll$ = combineLatest([connection$, isRefused$]).pipe(
      map(([connection, isRefused]) => isRefused || connection === 'unavailable'),
      distinctUntilChanged(),
      switchMap((shouldPoll) => {
        this.isPolling.set(shouldPoll);
        if (!shouldPoll) return EMPTY;
        return timer(0, assessmentPollIntervalMs).pipe(
          exhaustMap(() =>
            this.api
              .get(id)
              .pipe(catchError((error: unknown) => this.pollFailed(error, stopPolling$))),
          ),
          takeUntil(stopPolling$),
        );
      }),
    );
    return merge(live$, poll$).pipe(
      tap((update) => this.show(update)),
      filter((update) => isFinished(update)),
      take(1),
      switchMap((update) => (isView(update) ? of(update) : this.readWhole(id))),
      tap({ finalize: () => this.isPolling.set(false) }),
    );
  }

  private show(update: Update): void {
    const event = toEvent(update);
    this.live.update((known) => (known && known.id === event.id ? later(known, event) : event));
    if (isView(update)) this.problem.set('');
  }

  /** A refusal (4xx) stops the polling; a lost server is tried again at the next tick. */
  private pollFailed(error: unknown, stopPolling$: Subject<void>): Observable<never> {
    const isRefusal =
      error instanceof HttpErrorResponse && error.status >= 400 && error.status < 500;
    if (isRefusal) stopPolling$.next();
    this.problem.set(
      isRefusal
        ? `The assessment cannot be read: ${problemMessage(error)}`
        : `${problemMessage(error)} Trying again in ${assessmentPollIntervalMs / 1000} s.`,
    );
    return EMPTY;
  }

  private readWhole(id: string): Observable<AssessmentView> {
    return this.api.get(id).pipe(
      catchError((error: unknown) => {
        this.problem.set(`The finished assessment could not be read: ${problemMessage(error)}`);
        return EMPTY;
      }),
    );
  }
}

function isView(update: Update): update is AssessmentView {
  return 'createdAt' in update;
}

function toEvent(update: Update): AssessmentProgressEvent {
  return {
    id: update.id,
    planId: update.planId,
    status: update.status,
    progress: update.progress,
    ...('stage' in update && update.stage ? { stage: update.stage } : {}),
    ...(update.error ? { error: update.error } : {}),
  };
}

/**
 * The later of two states of one assessment: events may cross (a poll answer and a socket
 * event), and the bar must never run backwards. A stage is kept until a new one is named.
 */
function later(
  known: AssessmentProgressEvent,
  incoming: AssessmentProgressEvent,
): AssessmentProgressEvent {
  const knownRank = statusRank[known.status];
  const incomingRank = statusRank[incoming.status];
  if (incomingRank < knownRank) return known;
  if (incomingRank === knownRank && incoming.progress < known.progress) return known;
  if (!incoming.stage && known.stage && incomingRank === knownRank) {
    return { ...incoming, stage: known.stage };
  }
  return incoming;
}
