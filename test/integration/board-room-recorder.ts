/**
 * A board room with no Socket.IO behind it that keeps what the services send to each meeting's
 * room, and lets a suite say who is connected to one. It stands in only for the transport: the
 * HTTP suites of votes, comments and annotations check that the right event with the right
 * payload goes to the right meeting, and that a member in the room does not attend by vote.
 * Delivery over real sockets is the session suites' concern.
 */
import { BoardRoom } from '../../server/src/modules/board-session/board-room';

export interface RoomEmit {
  meetingId: string;
  event: string;
  payload: unknown;
}

export class RecordingBoardRoom extends BoardRoom {
  readonly emitted: RoomEmit[] = [];
  private readonly connected = new Set<string>();

  override toMeeting(meetingId: string): ReturnType<BoardRoom['toMeeting']> {
    const emit = (event: string, payload: unknown) => {
      this.emitted.push({ meetingId, event, payload });
      return true;
    };
    return { emit } as unknown as ReturnType<BoardRoom['toMeeting']>;
  }

  override toMeetingVolatile(meetingId: string): ReturnType<BoardRoom['toMeeting']> {
    return this.toMeeting(meetingId);
  }

  /** Marks the user as connected to (or gone from) the meeting's room. */
  setInRoom(meetingId: string, userId: string, isInRoom: boolean): void {
    const key = `${meetingId}:${userId}`;
    if (isInRoom) this.connected.add(key);
    else this.connected.delete(key);
  }

  override socketsOf(meetingId: string, userId: string): Promise<number> {
    return Promise.resolve(this.connected.has(`${meetingId}:${userId}`) ? 1 : 0);
  }

  /** What was sent since the mark, by event name. */
  since(mark: number, event?: string): RoomEmit[] {
    return this.emitted.slice(mark).filter((emit) => !event || emit.event === event);
  }
}
