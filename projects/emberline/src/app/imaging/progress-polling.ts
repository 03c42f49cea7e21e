import {
  EMPTY,
  ReplaySubject,
  catchError,
  defer,
  exhaustMap,
  finalize,
  map,
  merge,
  switchMap,
  take,
  takeUntil,
  tap,
  timer,
  type Observable,
} from 'rxjs';

/** An event of the request, or an answer of the progress poll, in the order they came. */
export type Polled<T, P> = { kind: 'event'; event: T } | { kind: 'progress'; progress: P };

/** How often the server's progress is asked for while it works on a request. */
export const progressPollPeriodMs = 500;

/**
 * Mirrors the events of `request` and, from the first event `startsPolling` accepts (or from the
 * start when it is null) until the request ends, the answers of `poll` every `periodMs` (one poll at a time; a slow one is not
 * stacked). Everything stops when the request answers or fails, and when the subscriber
 * unsubscribes (a cancel, a destroyed component): no timer outlives the request. A failed poll
 * (404 before the server starts, a dropped connection) is passed over; the next one may succeed.
 */
export function pollDuring<T, P>(
  request: Observable<T>,
  startsPolling: ((event: T) => boolean) | null,
  poll: () => Observable<P>,
  periodMs = progressPollPeriodMs,
): Observable<Polled<T, P>> {
  return defer(() => {
    // Replayed, so that an event the request emits while it is being subscribed (HttpClient's
    // `Sent`) still starts the polling.
    const started = new ReplaySubject<void>(1);
    const ended = new ReplaySubject<void>(1);
    if (!startsPolling) started.next();
    const progress = started.pipe(
      take(1),
      switchMap(() => timer(0, periodMs)),
      exhaustMap(() => poll().pipe(catchError(() => EMPTY))),
      takeUntil(ended),
      map((answer): Polled<T, P> => ({ kind: 'progress', progress: answer })),
    );
    const events = request.pipe(
      tap((event) => {
        if (startsPolling?.(event)) started.next();
      }),
      finalize(() => ended.next()),
      map((event): Polled<T, P> => ({ kind: 'event', event })),
    );
    return merge(progress, events);
  });
}
