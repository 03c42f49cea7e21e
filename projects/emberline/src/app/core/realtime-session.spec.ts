import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import type { AssessmentProgressEvent, CurrentUser, WatchAcknowledgement } from '@emberline/shared';
import { AuthSession } from './auth-session';
import {
  REALTIME_SOCKET_FACTORY,
  RealtimeSession,
  watchAcknowledgementTimeoutMs,
  type RealtimeSocket,
} from './realtime-session';

type Handler = (...args: unknown[]) => void;

interface PendingWatch {
  event: string;
  payload: { assessmentId: string };
  timeoutMs: number;
  answer: (acknowledgement: WatchAcknowledgement) => void;
  giveUp: () => void;
}

/**
 * Stands in for socket.io-client's Socket, acting as its documentation describes (Socket.IO v4
 * client API, from memory): `connect` fires on the first connection and on every reconnection,
 * `active` stays true while the manager retries and turns false after `disconnect()` or a
 * refusal by the server; `timeout(ms).emitWithAck` rejects when no answer comes.
 */
class FakeSocket {
  connected = false;
  active = false;
  connectCalls = 0;
  disconnectCalls = 0;
  readonly emitted: [string, unknown][] = [];
  readonly watches: PendingWatch[] = [];
  private readonly handlers = new Map<string, Handler[]>();

  on(event: string, handler: Handler): this {
    this.handlers.set(event, [...(this.handlers.get(event) ?? []), handler]);
    return this;
  }

  removeAllListeners(): this {
    this.handlers.clear();
    return this;
  }

  connect(): this {
    this.connectCalls += 1;
    this.active = true;
    return this;
  }

  disconnect(): this {
    this.disconnectCalls += 1;
    this.active = false;
    this.connected = false;
    return this;
  }

  emit(event: string, payload: unknown): this {
    this.emitted.push([event, payload]);
    return this;
  }

  timeout(timeoutMs: number) {
    return {
      emitWithAck: (event: string, payload: { assessmentId: string }) =>
        new Promise<WatchAcknowledgement>((resolve, reject) => {
          this.watches.push({
            event,
            payload,
            timeoutMs,
            answer: resolve,
            giveUp: () => reject(new Error('operation has timed out')),
          });
        }),
    };
  }

  // What the server and the network do:
  serverAccepts(): void {
    this.connected = true;
    this.active = true;
    this.fire('connect');
  }

  networkDrops(): void {
    this.connected = false;
    this.fire('disconnect', 'transport close');
  }

  attemptFails(): void {
    this.fire('connect_error', new Error('xhr poll error'));
  }

  serverRefuses(): void {
    this.active = false;
    this.fire('connect_error', new Error('Sign in first.'));
  }

  broadcast(event: AssessmentProgressEvent): void {
    this.fire('assessment:progressed', event);
  }

  private fire(event: string, ...args: unknown[]): void {
    for (const handler of this.handlers.get(event) ?? []) handler(...args);
  }
}

const firstId = '0b6c6a52-5b1e-4c1d-9d57-0f1e2d3c4b5a';
const secondId = '6f1d2c3b-4a59-4876-8e9f-a0b1c2d3e4f5';

function progress(
  id: string,
  status: AssessmentProgressEvent['status'],
  fraction: number,
): AssessmentProgressEvent {
  return { id, planId: 'plan-1', status, progress: fraction };
}

/** Lets the acknowledgement promises settle. */
const settle = () => new Promise<void>((resolve) => setTimeout(resolve, 0));

describe('RealtimeSession', () => {
  let sockets: FakeSocket[];
  let user: ReturnType<typeof signal<CurrentUser | null | undefined>>;
  let session: RealtimeSession;

  const socket = () => {
    const last = sockets.at(-1);
    if (!last) throw new Error('No socket was opened');
    return last;
  };

  beforeEach(() => {
    sockets = [];
    user = signal<CurrentUser | null | undefined>({ id: 'user-1' } as CurrentUser);
    TestBed.configureTestingModule({
      providers: [
        provideZonelessChangeDetection(),
        { provide: AuthSession, useValue: { user } },
        {
          provide: REALTIME_SOCKET_FACTORY,
          useValue: () => {
            const created = new FakeSocket();
            sockets.push(created);
            return created as unknown as RealtimeSocket;
          },
        },
      ],
    });
    session = TestBed.inject(RealtimeSession);
    TestBed.tick();
  });

  it('opens no socket until something is watched', () => {
    expect(sockets).toHaveLength(0);
    expect(session.connection()).toBe('idle');

    const subscription = session.watchAssessment(firstId).subscribe();
    expect(sockets).toHaveLength(1);
    expect(socket().connectCalls).toBe(1);
    expect(session.connection()).toBe('connecting');
    subscription.unsubscribe();
  });

  it('watches the room once connected and hands over the state the acknowledgement carries', async () => {
    const received: WatchAcknowledgement[] = [];
    const subscription = session
      .watchAssessment(firstId)
      .subscribe((update) => received.push(update));
    expect(socket().watches).toHaveLength(0);

    socket().serverAccepts();
    expect(session.connection()).toBe('connected');
    expect(socket().watches).toHaveLength(1);
    const watch = socket().watches[0];
    expect(watch.event).toBe('assessment:watch');
    expect(watch.payload).toEqual({ assessmentId: firstId });
    expect(watch.timeoutMs).toBe(watchAcknowledgementTimeoutMs);

    watch.answer({ ok: true, event: progress(firstId, 'running', 0.25) });
    await settle();
    expect(received).toEqual([{ ok: true, event: progress(firstId, 'running', 0.25) }]);
    subscription.unsubscribe();
  });

  it('passes a refused watch on as a refusal, with its status and detail', async () => {
    const received: WatchAcknowledgement[] = [];
    const subscription = session
      .watchAssessment(firstId)
      .subscribe((update) => received.push(update));
    socket().serverAccepts();
    socket().watches[0].answer({ ok: false, status: 404, detail: 'The assessment was not found.' });
    await settle();
    expect(received).toEqual([{ ok: false, status: 404, detail: 'The assessment was not found.' }]);
    subscription.unsubscribe();
  });

  it('relays each progress broadcast to the watchers of that assessment only', () => {
    const first: WatchAcknowledgement[] = [];
    const second: WatchAcknowledgement[] = [];
    const subscriptions = [
      session.watchAssessment(firstId).subscribe((update) => first.push(update)),
      session.watchAssessment(secondId).subscribe((update) => second.push(update)),
    ];
    expect(sockets).toHaveLength(1);
    socket().serverAccepts();

    socket().broadcast(progress(secondId, 'running', 0.5));
    socket().broadcast(progress(firstId, 'done', 1));
    expect(first).toEqual([{ ok: true, event: progress(firstId, 'done', 1) }]);
    expect(second).toEqual([{ ok: true, event: progress(secondId, 'running', 0.5) }]);
    for (const subscription of subscriptions) subscription.unsubscribe();
  });

  it('gives a late watcher of the same assessment the latest state, without a second watch', async () => {
    const early = session.watchAssessment(firstId).subscribe();
    socket().serverAccepts();
    socket().watches[0].answer({ ok: true, event: progress(firstId, 'running', 0.4) });
    await settle();

    const late: WatchAcknowledgement[] = [];
    const subscription = session.watchAssessment(firstId).subscribe((update) => late.push(update));
    expect(late).toEqual([{ ok: true, event: progress(firstId, 'running', 0.4) }]);
    expect(socket().watches).toHaveLength(1);
    early.unsubscribe();
    subscription.unsubscribe();
  });

  it('after a reconnection watches every room again and reads back what changed meanwhile', async () => {
    const received: WatchAcknowledgement[] = [];
    const subscriptions = [
      session.watchAssessment(firstId).subscribe((update) => received.push(update)),
      session.watchAssessment(secondId).subscribe(),
    ];
    socket().serverAccepts();
    expect(socket().watches.map((watch) => watch.payload.assessmentId)).toEqual([
      firstId,
      secondId,
    ]);

    socket().networkDrops();
    // The manager keeps retrying (active): connecting, not given up.
    expect(session.connection()).toBe('connecting');
    socket().attemptFails();
    expect(session.connection()).toBe('unavailable');

    socket().serverAccepts();
    expect(session.connection()).toBe('connected');
    expect(sockets).toHaveLength(1);
    const rewatched = socket().watches.slice(2);
    expect(rewatched.map((watch) => watch.payload.assessmentId)).toEqual([firstId, secondId]);
    rewatched[0].answer({ ok: true, event: progress(firstId, 'done', 1) });
    await settle();
    expect(received.at(-1)).toEqual({ ok: true, event: progress(firstId, 'done', 1) });
    for (const subscription of subscriptions) subscription.unsubscribe();
  });

  it('ignores a watch left unanswered in time; the next connection asks again', async () => {
    const received: WatchAcknowledgement[] = [];
    const subscription = session.watchAssessment(firstId).subscribe({
      next: (update) => received.push(update),
      error: () => received.push({ ok: false, status: 0, detail: 'errored' }),
    });
    socket().serverAccepts();
    socket().watches[0].giveUp();
    await settle();
    expect(received).toEqual([]);
    subscription.unsubscribe();
  });

  it('leaves the room when the last watcher unsubscribes', () => {
    const one = session.watchAssessment(firstId).subscribe();
    const two = session.watchAssessment(firstId).subscribe();
    socket().serverAccepts();

    one.unsubscribe();
    expect(socket().emitted).toEqual([]);
    two.unsubscribe();
    expect(socket().emitted).toEqual([['assessment:unwatch', { assessmentId: firstId }]]);
  });

  it('says the connection is unavailable when the server refuses the handshake, and tries again on the next watch', () => {
    const subscription = session.watchAssessment(firstId).subscribe();
    socket().serverRefuses();
    expect(session.connection()).toBe('unavailable');

    const again = session.watchAssessment(secondId).subscribe();
    expect(sockets).toHaveLength(1);
    expect(socket().connectCalls).toBe(2);
    expect(session.connection()).toBe('connecting');
    subscription.unsubscribe();
    again.unsubscribe();
  });

  it('closes the socket on sign-out, and opens a new one for the next user', () => {
    const received: WatchAcknowledgement[] = [];
    const subscription = session
      .watchAssessment(firstId)
      .subscribe((update) => received.push(update));
    const first = socket();
    first.serverAccepts();

    user.set(null);
    TestBed.tick();
    expect(first.disconnectCalls).toBe(1);
    expect(session.connection()).toBe('idle');
    expect(sockets).toHaveLength(1);

    user.set({ id: 'user-2' } as CurrentUser);
    TestBed.tick();
    expect(sockets).toHaveLength(2);
    expect(socket().connectCalls).toBe(1);
    socket().serverAccepts();
    expect(socket().watches.map((watch) => watch.payload.assessmentId)).toEqual([firstId]);
    // Events of the closed socket reach nobody.
    first.broadcast(progress(firstId, 'done', 1));
    expect(received).toEqual([]);
    subscription.unsubscribe();
  });

  it('closes the socket and completes every watch when the application is destroyed', () => {
    let isComplete = false;
    session.watchAssessment(firstId).subscribe({ complete: () => (isComplete = true) });
    socket().serverAccepts();

    TestBed.resetTestingModule();
    expect(socket().disconnectCalls).toBe(1);
    expect(isComplete).toBe(true);
  });
});
