import { DestroyRef, Injectable, InjectionToken, inject, signal } from '@angular/core';
import type {
  CastVote,
  CommentView,
  DecisionView,
  PostComment,
  PresenceView,
  RecordDecision,
  SessionAck,
  SessionClientEvents,
  SessionServerEvents,
  SessionSnapshot,
  TallyView,
  ViewState,
  ViewStateEvent,
} from '@emberline/shared';
import { io, type Socket } from 'socket.io-client';
import { Subject } from 'rxjs';

export type SessionSocket = Socket<SessionServerEvents, SessionClientEvents>;

/** Opens the `/session` namespace on the app's own origin (tests provide a fake). */
export const SESSION_SOCKET_FACTORY = new InjectionToken<() => SessionSocket>(
  'SESSION_SOCKET_FACTORY',
  {
    providedIn: 'root',
    factory: () => () =>
      io('/session', {
        path: '/socket.io',
        autoConnect: false,
        withCredentials: true,
        // A WebSocket carries the page's Origin, which the server checks.
        transports: ['websocket', 'polling'],
      }),
  },
);

/** How long an event waits for the server's acknowledgement. */
export const sessionAckTimeoutMs = 8_000;
/** The lead sends its view at most this often (20 a second); the latest state wins. */
export const viewSendIntervalMs = 50;

export type SessionConnection = 'connecting' | 'connected' | 'reconnecting' | 'closed';

/**
 * The board session of one meeting, as the room page sees it: joins on every connection (a
 * recovered connection keeps its room and gets what it missed from the server; a new one joins
 * again and the page reads everything back, `resynced`), keeps presence and the latest shared
 * view, and sends the lead's view at a bounded rate. Provided by the room component.
 */
@Injectable()
export class BoardSessionSocket {
  private readonly createSocket = inject(SESSION_SOCKET_FACTORY);
  private socket: SessionSocket | null = null;
  private meetingId: string | null = null;
  private pendingView: ViewState | null = null;
  private viewTimer: ReturnType<typeof setTimeout> | null = null;
  private lastViewSentAt = 0;

  readonly connection = signal<SessionConnection>('connecting');
  readonly snapshot = signal<SessionSnapshot | null>(null);
  readonly presence = signal<PresenceView | null>(null);
  readonly view = signal<ViewStateEvent | null>(null);
  readonly problem = signal('');

  /** After a (re)join that was not a recovery: the page reads its lists again. */
  readonly resynced = new Subject<void>();
  readonly tallies = new Subject<TallyView>();
  readonly comments = new Subject<CommentView>();
  readonly agendaChanged = new Subject<void>();
  readonly decisions = new Subject<void>();
  readonly annotations = new Subject<void>();

  constructor() {
    inject(DestroyRef).onDestroy(() => this.close());
  }

  open(meetingId: string): void {
    this.close();
    this.meetingId = meetingId;
    const socket = this.createSocket();
    this.socket = socket;
    socket.on('connect', () => {
      this.connection.set('connected');
      if (!socket.recovered) void this.join();
    });
    socket.on('disconnect', () => this.connection.set(socket.active ? 'reconnecting' : 'closed'));
    socket.on('connect_error', () =>
      this.connection.set(socket.active ? 'reconnecting' : 'closed'),
    );
    socket.on('presence', (event) => {
      if (event.meetingId === this.meetingId) this.presence.set(event);
    });
    socket.on('view:state', (event) => this.takeView(event));
    socket.on('vote:tally', (event) => this.tallies.next(event));
    socket.on('comment:posted', (event) => this.comments.next(event));
    socket.on('agenda:changed', () => this.agendaChanged.next());
    socket.on('decision:recorded', () => this.decisions.next());
    socket.on('annotation:created', () => this.annotations.next());
    socket.on('annotation:updated', () => this.annotations.next());
    socket.on('annotation:deleted', () => this.annotations.next());
    this.connection.set('connecting');
    socket.connect();
  }

  close(): void {
    if (this.viewTimer) clearTimeout(this.viewTimer);
    this.viewTimer = null;
    const socket = this.socket;
    this.socket = null;
    if (!socket) return;
    socket.removeAllListeners();
    socket.disconnect();
    this.connection.set('closed');
  }

  /** Sends the lead's view: at once, or at the end of the interval with the latest state. */
  sendView(state: ViewState): void {
    this.pendingView = state;
    const wait = this.lastViewSentAt + viewSendIntervalMs - Date.now();
    if (wait <= 0) {
      this.flushView();
    } else {
      this.viewTimer ??= setTimeout(() => {
        this.viewTimer = null;
        this.flushView();
      }, wait);
    }
  }

  handOver(userId: string): Promise<SessionAck<PresenceView>> {
    return this.ask('view:hand-over', { meetingId: this.meetingId, userId });
  }

  castVote(agendaItemId: string, vote: CastVote): Promise<SessionAck<TallyView>> {
    return this.ask('vote:cast', { agendaItemId, vote });
  }

  postComment(agendaItemId: string, comment: PostComment): Promise<SessionAck<CommentView>> {
    return this.ask('comment:post', { agendaItemId, comment });
  }

  recordDecision(caseId: string, decision: RecordDecision): Promise<SessionAck<DecisionView>> {
    return this.ask('decision:record', { caseId, decision });
  }

  private async join(): Promise<void> {
    const answer = await this.ask<SessionSnapshot>('session:join', { meetingId: this.meetingId });
    if (!answer.ok) {
      this.problem.set(answer.problem.detail ?? answer.problem.title);
      return;
    }
    this.problem.set('');
    this.snapshot.set(answer.data);
    this.presence.set(answer.data.presence);
    this.takeView(answer.data.view, true);
    this.resynced.next();
  }

  /** A state older than the one held is dropped, unless the lead has changed. */
  private takeView(event: ViewStateEvent, isResync = false): void {
    if (event.meetingId !== this.meetingId) return;
    const held = this.view();
    const isNewLead = held && held.leadUserId !== event.leadUserId;
    if (held && !isResync && !isNewLead && event.sequence <= held.sequence) return;
    this.view.set(event);
  }

  private flushView(): void {
    const state = this.pendingView;
    if (!state || !this.socket?.connected) return;
    this.pendingView = null;
    this.lastViewSentAt = Date.now();
    this.socket.emit('view:update', { meetingId: this.meetingId ?? '', state }, (answer) => {
      if (!answer.ok) this.problem.set(answer.problem.detail ?? answer.problem.title);
    });
  }

  private async ask<T>(event: keyof SessionClientEvents, payload: unknown): Promise<SessionAck<T>> {
    const socket = this.socket;
    if (!socket?.connected) {
      return {
        ok: false,
        problem: {
          type: 'about:blank',
          title: 'Not connected',
          status: 503,
          detail: 'The session is reconnecting; try again in a moment.',
        },
      };
    }
    try {
      return await (
        socket.timeout(sessionAckTimeoutMs) as unknown as {
          emitWithAck(name: string, body: unknown): Promise<SessionAck<T>>;
        }
      ).emitWithAck(event, payload);
    } catch {
      return {
        ok: false,
        problem: {
          type: 'about:blank',
          title: 'No answer',
          status: 504,
          detail: 'The server did not answer in time; try again.',
        },
      };
    }
  }
}
