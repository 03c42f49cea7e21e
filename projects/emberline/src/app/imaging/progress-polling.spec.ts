import { NEVER, Subject, concat, of, throwError, type Observable } from 'rxjs';
import { pollDuring, type Polled } from './progress-polling';

describe('pollDuring', () => {
  let request: Subject<string>;
  let polls: number;
  let seen: Polled<string, number>[];
  let failure: unknown;

  /** Each poll answers how many polls were made so far. */
  function poll(): Observable<number> {
    polls++;
    return of(polls);
  }

  function progressSeen(): number[] {
    return seen.flatMap((item) => (item.kind === 'progress' ? [item.progress] : []));
  }

  beforeEach(() => {
    vi.useFakeTimers();
    request = new Subject<string>();
    polls = 0;
    seen = [];
    failure = undefined;
  });

  afterEach(() => vi.useRealTimers());

  function watch(startsPolling: ((event: string) => boolean) | null = (e) => e === 'sent') {
    return pollDuring(request, startsPolling, poll, 500).subscribe({
      next: (item) => seen.push(item),
      error: (error: unknown) => (failure = error),
    });
  }

  it('polls nothing before the starting event, then at once and every period', async () => {
    watch();
    request.next('uploading');
    await vi.advanceTimersByTimeAsync(2000);
    expect(polls).toBe(0);

    request.next('sent');
    await vi.advanceTimersByTimeAsync(0);
    expect(polls).toBe(1);
    await vi.advanceTimersByTimeAsync(1000);
    expect(polls).toBe(3);
    expect(seen.map((item) => item.kind)).toEqual([
      'event',
      'event',
      'progress',
      'progress',
      'progress',
    ]);
  });

  it('stops polling and leaves no timer once the request answers', async () => {
    let isComplete = false;
    pollDuring(request, (e) => e === 'sent', poll, 500).subscribe({
      next: (item) => seen.push(item),
      complete: () => (isComplete = true),
    });
    request.next('sent');
    await vi.advanceTimersByTimeAsync(500);
    request.next('answer');
    request.complete();

    expect(isComplete).toBe(true);
    expect(vi.getTimerCount()).toBe(0);
    await vi.advanceTimersByTimeAsync(5000);
    expect(polls).toBe(2);
    expect(seen.at(-1)).toEqual({ kind: 'event', event: 'answer' });
  });

  it('stops polling when the request fails, and passes the failure on', async () => {
    watch();
    request.next('sent');
    await vi.advanceTimersByTimeAsync(0);
    request.error(new Error('refused'));

    expect((failure as Error).message).toBe('refused');
    expect(vi.getTimerCount()).toBe(0);
    await vi.advanceTimersByTimeAsync(5000);
    expect(polls).toBe(1);
  });

  it('stops polling when the subscriber unsubscribes', async () => {
    const subscription = watch();
    request.next('sent');
    await vi.advanceTimersByTimeAsync(0);
    subscription.unsubscribe();

    expect(request.observed).toBe(false);
    expect(vi.getTimerCount()).toBe(0);
    await vi.advanceTimersByTimeAsync(5000);
    expect(polls).toBe(1);
  });

  it('passes over a failed poll and goes on polling', async () => {
    let calls = 0;
    const flaky = () => (++calls === 1 ? throwError(() => new Error('404')) : of(calls));
    pollDuring(request, null, flaky, 500).subscribe({
      next: (item) => seen.push(item),
      error: (error: unknown) => (failure = error),
    });
    await vi.advanceTimersByTimeAsync(500);

    expect(failure).toBeUndefined();
    expect(progressSeen()).toEqual([2]);
  });

  it('asks again only once the previous poll has answered', async () => {
    const slow = new Subject<number>();
    pollDuring(request, null, () => (polls++, slow), 500).subscribe();
    await vi.advanceTimersByTimeAsync(1600);
    expect(polls).toBe(1);
    slow.next(1);
    slow.complete();
    await vi.advanceTimersByTimeAsync(500);
    expect(polls).toBe(2);
  });

  it('starts on an event the request emits while it is being subscribed', async () => {
    // HttpClient emits `Sent` synchronously inside its subscription.
    pollDuring(concat(of('sent'), NEVER), (e) => e === 'sent', poll, 500).subscribe();
    await vi.advanceTimersByTimeAsync(0);
    expect(polls).toBe(1);
  });
});
