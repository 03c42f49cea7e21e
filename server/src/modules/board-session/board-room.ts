/**
 * The board session's rooms, for whoever changes something the room must see: the socket
 * handlers and the REST routes alike call `toMeeting(id).emit(…)`, so an action taken over the
 * API reaches every member in the room. Before the realtime server is attached (a test app
 * without sockets) the emits go nowhere and presence is empty.
 *
 * Rooms: `meeting:<id>` (the members who joined that meeting), `user:<id>` (every socket of a
 * user), `http-session:<id>` (the sockets of one signed-in browser session). With the Postgres
 * adapter these reach the sockets of every server process.
 */
import type { Namespace } from 'socket.io';
import type {
  PresentMember,
  SessionClientEvents,
  SessionServerEvents,
  Specialty,
} from '@emberline/shared';

/** What a `/session` socket carries about its user, set at the handshake and on join. */
export interface SessionSocketData {
  userId: string;
  signInMethod: 'local' | 'saml';
  /** The express-session id of the browser session the socket was opened from. */
  httpSessionId: string;
  displayName: string;
  /** boardId → specialty, read at the handshake and again on every join. */
  specialties: Record<string, Specialty>;
  /** The meeting the socket has joined, if any. */
  meetingId: string | null;
}

export type SessionNamespace = Namespace<
  SessionClientEvents,
  SessionServerEvents,
  Record<string, never>,
  SessionSocketData
>;

export const meetingRoom = (meetingId: string) => `meeting:${meetingId}`;
export const userRoom = (userId: string) => `user:${userId}`;
export const httpSessionRoom = (sessionId: string) => `http-session:${sessionId}`;

type RoomSockets = Awaited<ReturnType<ReturnType<SessionNamespace['in']>['fetchSockets']>>;

type Emitter = Pick<ReturnType<SessionNamespace['to']>, 'emit'>;

const nowhere: Emitter = { emit: () => true };

export class BoardRoom {
  private namespace: SessionNamespace | null = null;
  private log: (message: string, error?: unknown) => void = () => undefined;

  attach(namespace: SessionNamespace, log?: (message: string, error?: unknown) => void): void {
    this.namespace = namespace;
    if (log) this.log = log;
  }

  /** Emits to every socket in the meeting's room, on every server process. */
  toMeeting(meetingId: string): Emitter {
    return this.namespace ? this.namespace.to(meetingRoom(meetingId)) : nowhere;
  }

  /** Like `toMeeting`, but a slow client drops what it cannot take (no backlog). */
  toMeetingVolatile(meetingId: string): Emitter {
    return this.namespace ? this.namespace.volatile.to(meetingRoom(meetingId)) : nowhere;
  }

  /** Deactivation or a lost membership: every socket of the user closes at once. */
  disconnectUser(userId: string): void {
    this.namespace?.in(userRoom(userId)).disconnectSockets(true);
  }

  /** Sign-out: the sockets opened from that browser session close at once. */
  disconnectHttpSession(sessionId: string): void {
    this.namespace?.in(httpSessionRoom(sessionId)).disconnectSockets(true);
  }

  /**
   * The members connected to the meeting's room now, on every process, one entry per user with
   * the specialty they hold on `boardId`.
   */
  async membersInRoom(meetingId: string, boardId: string): Promise<PresentMember[]> {
    const sockets = await this.socketsInRoom(meetingId);
    const byUser = new Map<string, PresentMember>();
    for (const socket of sockets) {
      const specialty = socket.data.specialties?.[boardId];
      if (!specialty || byUser.has(socket.data.userId)) continue;
      byUser.set(socket.data.userId, {
        userId: socket.data.userId,
        displayName: socket.data.displayName,
        specialty,
        isInRoom: true,
      });
    }
    return [...byUser.values()];
  }

  /** How many of the user's sockets are in the meeting's room now (all processes). */
  async socketsOf(meetingId: string, userId: string): Promise<number> {
    const sockets = await this.socketsInRoom(meetingId);
    return sockets.filter((socket) => socket.data.userId === userId).length;
  }

  /**
   * The room's sockets on every process. A peer process that died without saying so leaves the
   * cluster's question unanswered until the adapter drops it (seconds): rather than fail the
   * vote or the join meanwhile, this process's own sockets answer, and the miss is logged.
   */
  private async socketsInRoom(meetingId: string): Promise<RoomSockets> {
    if (!this.namespace) return [];
    try {
      return await this.namespace.in(meetingRoom(meetingId)).fetchSockets();
    } catch (error) {
      this.log('Presence was read from this process only: another process did not answer.', error);
      return this.namespace.local.in(meetingRoom(meetingId)).fetchSockets();
    }
  }
}
