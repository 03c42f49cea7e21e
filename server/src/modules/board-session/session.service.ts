import type { EntityManager } from '@mikro-orm/postgresql';
import type {
  PresenceView,
  SessionPermissions,
  SessionSnapshot,
  ViewState,
  ViewStateEvent,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { Attendance } from '../meetings/attendance.entity';
import { Meeting } from '../meetings/meeting.entity';
import { User } from '../users/user.entity';
import type { BoardRoom } from './board-room';
import { presenceOf } from './presence';

/** Roles that take part in the board's discussion and vote (coordinators, administrators not). */
export const clinicalRoles = ['presenting-physician', 'board-member', 'proceduralist'] as const;

/**
 * Joining and leaving the live session, attendance, the lead and its shared view.
 *
 * The session opens (`scheduled` → `in-session`) when its chair first joins; the presenting
 * physician of the first item leads the shared view (the chair when the agenda is empty). The
 * lead, or the chair, hands the lead to another member in the room.
 */
export class SessionService {
  constructor(
    private readonly em: EntityManager,
    private readonly room: BoardRoom,
  ) {}

  /** Only members of the meeting's board join; a meeting out of reach is a 404. */
  async findJoinable(user: SignedInUser, meetingId: string): Promise<Meeting> {
    const meeting = await this.findOfMember(user, meetingId);
    if (meeting.state === 'closed') {
      throw new ConflictError('The meeting is closed; its minutes are the record.');
    }
    return meeting;
  }

  /**
   * A meeting of one of the user's boards, whatever its state: 404 when out of reach, 403 for an
   * administrator, who sees the meeting but does not take part in its session.
   */
  async findOfMember(user: SignedInUser, meetingId: string): Promise<Meeting> {
    const meeting = await this.em.findOne(Meeting, meetingId, { populate: ['board', 'chair'] });
    if (!meeting) throw new NotFoundError('The meeting');
    if (!user.memberships.has(meeting.board.id)) {
      if (hasRole(user, 'administrator')) {
        throw new ForbiddenError('The board session is for members of the board.');
      }
      throw new NotFoundError('The meeting');
    }
    return meeting;
  }

  /** Records the member's arrival (one open room visit per member) and opens the session. */
  async arrive(user: SignedInUser, actor: Actor, meeting: Meeting): Promise<void> {
    if (meeting.state === 'scheduled' && meeting.chair.id === user.id) {
      meeting.state = 'in-session';
      meeting.openedAt = new Date();
      meeting.lead ??= this.em.getReference(User, await this.firstPresenterOr(meeting, user.id), {
        wrapped: true,
      });
      recordAudit(this.em, actor, {
        action: 'meeting.open',
        entityType: 'meeting',
        entityId: meeting.id,
      });
    }
    const open = await this.em.findOne(Attendance, {
      meeting: meeting.id,
      user: user.id,
      via: 'room',
      leftAt: null,
    });
    if (!open) {
      this.em.persist(
        new Attendance({
          meeting: this.em.getReference(Meeting, meeting.id, { wrapped: true }),
          user: this.em.getReference(User, user.id, { wrapped: true }),
          specialty: user.memberships.get(meeting.board.id) ?? null,
        }),
      );
    }
    await this.em.flush();
  }

  /** Closes the member's room visit once their last socket has left the room. */
  async depart(userId: string, meetingId: string): Promise<void> {
    if ((await this.room.socketsOf(meetingId, userId)) > 0) return;
    await this.em.nativeUpdate(
      Attendance,
      { meeting: meetingId, user: userId, via: 'room', leftAt: null },
      { leftAt: new Date() },
    );
  }

  async snapshot(
    user: SignedInUser,
    meetingId: string,
    view: ViewStateEvent,
  ): Promise<SessionSnapshot> {
    const meeting = await this.em.findOneOrFail(Meeting, meetingId, { populate: ['board'] });
    const presence = await presenceOf(this.em, this.room, meetingId);
    return { presence, view, permissions: permissionsOf(user, meeting) };
  }

  /** Hands the lead to a member who is in the room; by the lead or the chair. */
  async handOver(
    user: SignedInUser,
    actor: Actor,
    meetingId: string,
    toUserId: string,
  ): Promise<PresenceView> {
    const meeting = await this.findJoinable(user, meetingId);
    if (meeting.state !== 'in-session') {
      throw new ConflictError('The lead is handed over during the session.');
    }
    if (meeting.lead?.id !== user.id && meeting.chair.id !== user.id) {
      throw new ForbiddenError('Only the lead or the chair hands the lead over.');
    }
    const inRoom = await this.room.membersInRoom(meetingId, meeting.board.id);
    if (!inRoom.some((member) => member.userId === toUserId)) {
      const message = 'Hand the lead to a member who is in the room.';
      throw new ValidationError(`userId: ${message}`, [{ path: 'userId', message }]);
    }
    meeting.lead = this.em.getReference(User, toUserId, { wrapped: true });
    recordAudit(this.em, actor, {
      action: 'session.hand-over',
      entityType: 'meeting',
      entityId: meeting.id,
      detail: { toUserId },
    });
    await this.em.flush();
    return presenceOf(this.em, this.room, meetingId);
  }

  /** Only the lead moves the shared view, while the session runs. */
  async assertLead(user: SignedInUser, meetingId: string): Promise<Meeting> {
    const meeting = await this.findJoinable(user, meetingId);
    if (meeting.state !== 'in-session') {
      throw new ConflictError('The shared view moves while the session runs.');
    }
    if (meeting.lead?.id !== user.id) {
      throw new ForbiddenError('Only the lead moves the shared view; ask for the lead.');
    }
    return meeting;
  }

  /** Keeps the latest view, so that a late joiner or a resync starts where the room is. */
  async storeView(meetingId: string, state: ViewState, sequence: number): Promise<void> {
    await this.em.nativeUpdate(
      Meeting,
      { id: meetingId, viewSequence: { $lt: sequence } },
      { viewState: state, viewSequence: sequence },
    );
  }

  private async firstPresenterOr(meeting: Meeting, fallbackUserId: string): Promise<string> {
    const first = await this.em.findOne(
      AgendaItem,
      { meeting: meeting.id, closedAt: null },
      { orderBy: { position: 'asc' }, populate: ['clinicalCase'] },
    );
    return first?.clinicalCase.getEntity().presenter.id ?? fallbackUserId;
  }
}

export function permissionsOf(user: SignedInUser, meeting: Meeting): SessionPermissions {
  const isMember = user.memberships.has(meeting.board.id);
  const isClinical = isMember && hasRole(user, ...clinicalRoles);
  const isOpen = meeting.state !== 'closed';
  return {
    isChair: meeting.chair.id === user.id,
    isLead: meeting.lead?.id === user.id,
    canVote: isClinical && isOpen,
    canRecordDecision: isMember && hasRole(user, 'proceduralist') && isOpen,
    canComment: isClinical && isOpen,
    canAnnotate: isClinical && isOpen,
    canClose: meeting.chair.id === user.id && isOpen,
  };
}
