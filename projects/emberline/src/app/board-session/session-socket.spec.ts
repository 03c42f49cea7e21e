import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import type { SessionAck, SessionSnapshot, ViewState, ViewStateEvent } from '@emberline/shared';
import {
  BoardSessionSocket,
  SESSION_SOCKET_FACTORY,
  viewSendIntervalMs,
  type SessionSocket,
} from './session-socket';

type Handler = (...args: unknown[]) => void;

/**
 * Stands in for socket.io-client's Socket as its documentation describes (Socket.IO v4 client
 * API, from memory): `connect` fires on every (re)connection, `recovered` is true when the
 * server restored the session (connection-state recovery), `timeout(ms).emitWithAck` answers
 * with the server's acknowledgement.
 */
class FakeSocket {
  connected = false;
  active = false;
  recovered = false;
  readonly asked: { event: string; payload: unknown }[] = [];
  readonly emitted: { event: string; payload: unknown }[] = [];
  answer: (event: string) => SessionAck<unknown> = () => ({ ok: true, data: null });
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
    this.active = true;
    return this;
  }
  disconnect(): this {
    this.active = false;
    this.connected = false;
    return this;
  }
  emit(event: string, payload: unknown): this {
    this.emitted.push({ event, payload });
    return this;
  }
  timeout() {
    return {
      emitWithAck: async (event: string, payload: unknown) => {
        this.asked.push({ event, payload });
        return this.answer(event);
      },
    };
  }
  fire(event: string, ...args: unknown[]): void {
    for (const handler of this.handlers.get(event) ?? []) handler(...args);
  }
}

const state = (axial: number): ViewState => ({
  agendaItemId: null,
  seriesId: null,
  slice: { axial, coronal: 0, sagittal: 0 },
  window: null,
  camera: null,
});
const event = (sequence: number, axial: number, leadUserId = 'lead-1'): ViewStateEvent => ({
  meetingId: 'meeting-1',
  state: state(axial),
  leadUserId,
  sequence,
});
const snapshot = (sequence: number): SessionSnapshot => ({
  presence: {
    meetingId: 'meeting-1',
    members: [],
    quorum: { isMet: false, required: [], missing: [], presentCount: 0, explanation: 'Not met' },
    leadUserId: 'lead-1',
  },
  view: event(sequence, 5),
  permissions: {
    isChair: false,
    isLead: false,
    canVote: true,
    canRecordDecision: false,
    canComment: true,
    canAnnotate: true,
    canClose: false,
  },
});

describe('BoardSessionSocket', () => {
  let socket: FakeSocket;
  let session: BoardSessionSocket;

  beforeEach(() => {
    socket = new FakeSocket();
    socket.answer = (name) =>
      name === 'session:join' ? { ok: true, data: snapshot(10) } : { ok: true, data: null };
    TestBed.configureTestingModule({
      providers: [
        provideZonelessChangeDetection(),
        BoardSessionSocket,
        { provide: SESSION_SOCKET_FACTORY, useValue: () => socket as unknown as SessionSocket },
      ],
    });
    session = TestBed.inject(BoardSessionSocket);
    session.open('meeting-1');
  });

  async function connect(recovered: boolean): Promise<void> {
    socket.connected = true;
    socket.recovered = recovered;
    socket.fire('connect');
    await Promise.resolve();
    await Promise.resolve();
  }

  it('joins on a new connection and tells the page to read everything back', async () => {
    let resyncs = 0;
    session.resynced.subscribe(() => (resyncs += 1));
    await connect(false);
    expect(socket.asked.map((entry) => entry.event)).toEqual(['session:join']);
    expect(session.view()?.sequence).toBe(10);
    expect(resyncs).toBe(1);
  });

  it('does not join again on a recovered connection: the server replays what was missed', async () => {
    await connect(false);
    await connect(true);
    expect(socket.asked.filter((entry) => entry.event === 'session:join')).toHaveLength(1);
  });

  it('drops a view older than the one held, unless the lead changed', async () => {
    await connect(false);
    socket.fire('view:state', event(12, 20));
    socket.fire('view:state', event(11, 30));
    expect(session.view()?.state.slice?.axial).toBe(20);
    // A hand-over to a lead on another process may restart lower: the new lead's state counts.
    socket.fire('view:state', event(3, 40, 'lead-2'));
    expect(session.view()?.state.slice?.axial).toBe(40);
    // Another meeting's view is not this room's.
    socket.fire('view:state', { ...event(99, 50), meetingId: 'meeting-2' });
    expect(session.view()?.state.slice?.axial).toBe(40);
  });

  it('sends the lead’s view at most once an interval, the latest state winning', async () => {
    vi.useFakeTimers();
    try {
      await connect(false);
      for (let axial = 0; axial < 10; axial += 1) session.sendView(state(axial));
      expect(socket.emitted.filter((entry) => entry.event === 'view:update')).toHaveLength(1);
      vi.advanceTimersByTime(viewSendIntervalMs);
      const sent = socket.emitted.filter((entry) => entry.event === 'view:update');
      expect(sent).toHaveLength(2);
      expect((sent[1].payload as { state: ViewState }).state.slice?.axial).toBe(9);
    } finally {
      vi.useRealTimers();
    }
  });

  it('answers an action while disconnected with a problem, without sending it', async () => {
    const answer = await session.castVote('item-1', { option: 'tace', position: 'support' });
    expect(answer.ok).toBe(false);
    expect(socket.asked).toHaveLength(0);
  });
});
