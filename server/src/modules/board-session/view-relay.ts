import type { ViewState, ViewStateEvent } from '@emberline/shared';

/** The fastest the shared view is relayed to followers: 25 updates a second. */
export const viewRelayIntervalMs = 40;
/** How often the latest view is written to the database (for late joiners and resyncs). */
export const viewPersistIntervalMs = 500;

interface MeetingView {
  event: ViewStateEvent;
  lastSentAt: number;
  sendTimer: NodeJS.Timeout | null;
  persistTimer: NodeJS.Timeout | null;
  isDirty: boolean;
}

/**
 * The lead's view, relayed at a bounded rate with the latest state winning: an update that comes
 * sooner than the interval replaces any waiting one and goes out at the interval's end, so
 * followers never work through a backlog. The sends are volatile (a slow client drops what it
 * cannot take); the state is written to the database at most twice a second.
 */
export class ViewRelay {
  private readonly meetings = new Map<string, MeetingView>();

  constructor(
    private readonly send: (event: ViewStateEvent) => void,
    private readonly persist: (event: ViewStateEvent) => Promise<void>,
    private readonly log: (message: string, error?: unknown) => void,
  ) {}

  /** This process's latest view of the meeting, if it has relayed one. */
  latest(meetingId: string): ViewStateEvent | null {
    return this.meetings.get(meetingId)?.event ?? null;
  }

  /**
   * Takes the lead's new state; `storedSequence` is the database's, so that the sequence keeps
   * rising when the lead moves to another process. Answers the sequence given to the state.
   */
  update(
    meetingId: string,
    state: ViewState,
    leadUserId: string | null,
    storedSequence: number,
  ): number {
    const entry = this.meetings.get(meetingId);
    const sequence = Math.max(entry?.event.sequence ?? 0, storedSequence) + 1;
    const event: ViewStateEvent = { meetingId, state, leadUserId, sequence };
    const current: MeetingView = entry ?? {
      event,
      lastSentAt: 0,
      sendTimer: null,
      persistTimer: null,
      isDirty: false,
    };
    current.event = event;
    current.isDirty = true;
    this.meetings.set(meetingId, current);
    const wait = current.lastSentAt + viewRelayIntervalMs - Date.now();
    if (wait <= 0) {
      this.sendNow(current);
    } else {
      current.sendTimer ??= setTimeout(() => {
        current.sendTimer = null;
        this.sendNow(current);
      }, wait);
    }
    current.persistTimer ??= setTimeout(() => {
      current.persistTimer = null;
      void this.flush(meetingId);
    }, viewPersistIntervalMs);
    return sequence;
  }

  /** Writes the latest state now (before a hand-over, when the meeting closes). */
  async flush(meetingId: string): Promise<void> {
    const entry = this.meetings.get(meetingId);
    if (!entry || !entry.isDirty) return;
    entry.isDirty = false;
    try {
      await this.persist(entry.event);
    } catch (error) {
      entry.isDirty = true;
      this.log('The shared view could not be stored.', error);
    }
  }

  /** Stops the timers, writing what is waiting. */
  async close(): Promise<void> {
    for (const [meetingId, entry] of this.meetings) {
      if (entry.sendTimer) clearTimeout(entry.sendTimer);
      if (entry.persistTimer) clearTimeout(entry.persistTimer);
      await this.flush(meetingId);
    }
    this.meetings.clear();
  }

  private sendNow(entry: MeetingView): void {
    entry.lastSentAt = Date.now();
    this.send(entry.event);
  }
}
