import {
  DestroyRef,
  Injectable,
  InjectionToken,
  effect,
  inject,
  signal,
  untracked,
} from '@angular/core';
import type {
  ClientToServerEvents,
  ServerToClientEvents,
  WatchAcknowledgement,
} from '@emberline/shared';
import { io, type Socket } from 'socket.io-client';
import { Observable, ReplaySubject } from 'rxjs';
import { AuthSession } from './auth-session';

export type RealtimeSocket = Socket<ServerToClientEvents, ClientToServerEvents>;

/**
 * How the session opens its socket: same origin, path /socket.io, the session cookie sent along
 * (the server authenticates the handshake from it). Tests provide a fake.
 */
export const REALTIME_SOCKET_FACTORY = new InjectionToken<() => RealtimeSocket>(
  'REALTIME_SOCKET_FACTORY',
  {
    providedIn: 'root',
    factory: () => () => io({ path: '/socket.io', autoConnect: false, withCredentials: true }),
  },
);

/**
 * `idle`: no socket yet (nothing watched); `connecting`: first attempt or reconnecting after a
 * loss; `connected`; `unavailable`: the last attempt failed (the socket may still be retrying).
 */
export type RealtimeConnection = 'idle' | 'connecting' | 'connected' | 'unavailable';

/** How long a watch waits for the server's acknowledgement before the next connect retries. */
export const watchAcknowledgementTimeoutMs = 5_000;

interface WatchedRoom {
  updates: ReplaySubject<WatchAcknowledgement>;
  watchers: number;
}

/**
 * The one Socket.IO connection of the page. It opens on the first watch, reconnects on loss
 * (socket.io-client's own backoff) and, at every (re)connection, watches each room again: the
 * acknowledgement carries the current state, so what happened while away is read back. A
 * different user signing in, or signing out, closes the socket that authenticated as the
 * previous one.
 */
@Injectable({ providedIn: 'root' })
export class RealtimeSession {
  private readonly createSocket = inject(REALTIME_SOCKET_FACTORY);
  private readonly auth = inject(AuthSession);
  private socket: RealtimeSocket | null = null;
  /** Rooms watched by at least one subscriber; bookkeeping of this connection only. */
  private readonly rooms = new Map<string, WatchedRoom>();
  private lastUserId: string | null | undefined = undefined;
  private readonly state = signal<RealtimeConnection>('idle');

  readonly connection = this.state.asReadonly();

  constructor() {
    effect(() => {
      const userId = this.auth.user() === undefined ? undefined : (this.auth.user()?.id ?? null);
      untracked(() => this.followUser(userId));
    });
    inject(DestroyRef).onDestroy(() => this.close());
  }

  /**
   * The live state of an assessment: the acknowledgement of each watch (its current state, or
   * the refusal), then every `assessment:progressed` event. Unsubscribing the last watcher
   * leaves the room. The stream never errors; a refusal arrives as `{ ok: false }`.
   */
  watchAssessment(assessmentId: string): Observable<WatchAcknowledgement> {
    return new Observable<WatchAcknowledgement>((subscriber) => {
      const room = this.join(assessmentId);
      const subscription = room.updates.subscribe(subscriber);
      return () => {
        subscription.unsubscribe();
        this.leave(assessmentId);
      };
    });
  }

  private join(assessmentId: string): WatchedRoom {
    let room = this.rooms.get(assessmentId);
    if (!room) {
      room = { updates: new ReplaySubject<WatchAcknowledgement>(1), watchers: 0 };
      this.rooms.set(assessmentId, room);
    }
    room.watchers += 1;
    if (room.watchers === 1) {
      const socket = this.open();
      if (socket.connected) this.sendWatch(socket, assessmentId);
    }
    return room;
  }

  private leave(assessmentId: string): void {
    const room = this.rooms.get(assessmentId);
    if (!room) return;
    room.watchers -= 1;
    if (room.watchers > 0) return;
    this.rooms.delete(assessmentId);
    room.updates.complete();
    if (this.socket?.connected) this.socket.emit('assessment:unwatch', { assessmentId });
  }

  /** The socket, opened lazily on first use; one the server refused is tried again. */
  private open(): RealtimeSocket {
    if (this.socket) {
      if (!this.socket.active) {
        this.state.set('connecting');
        this.socket.connect();
      }
      return this.socket;
    }
    const socket = this.createSocket();
    this.socket = socket;
    socket.on('connect', () => {
      this.state.set('connected');
      for (const assessmentId of this.rooms.keys()) this.sendWatch(socket, assessmentId);
    });
    socket.on('connect_error', () => this.state.set('unavailable'));
    socket.on('disconnect', () => {
      // `active` is false when the server or we closed the socket: it will not come back alone.
      this.state.set(socket.active ? 'connecting' : 'unavailable');
    });
    socket.on('assessment:progressed', (event) => {
      this.rooms.get(event.id)?.updates.next({ ok: true, event });
    });
    this.state.set('connecting');
    socket.connect();
    return socket;
  }

  private sendWatch(socket: RealtimeSocket, assessmentId: string): void {
    socket
      .timeout(watchAcknowledgementTimeoutMs)
      .emitWithAck('assessment:watch', { assessmentId })
      .then(
        (acknowledgement) => {
          if (this.socket === socket) this.rooms.get(assessmentId)?.updates.next(acknowledgement);
        },
        // No answer in time: the connection is failing; the next `connect` watches again.
        () => undefined,
      );
  }

  private followUser(userId: string | null | undefined): void {
    if (userId === undefined) return;
    const previous = this.lastUserId;
    this.lastUserId = userId;
    if (previous === undefined || previous === userId) return;
    // The socket authenticated as `previous`: drop it, and reconnect as the new user if any.
    this.closeSocket();
    if (userId !== null && this.rooms.size > 0) this.open();
  }

  private closeSocket(): void {
    const socket = this.socket;
    if (!socket) return;
    this.socket = null;
    socket.removeAllListeners();
    socket.disconnect();
    this.state.set('idle');
  }

  private close(): void {
    this.closeSocket();
    for (const room of this.rooms.values()) room.updates.complete();
    this.rooms.clear();
  }
}
