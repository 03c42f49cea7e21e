import type { EntityManager } from '@mikro-orm/postgresql';
import type { PresenceView, PresentMember } from '@emberline/shared';
import { BoardMembership } from '../boards/board-membership.entity';
import { Attendance } from '../meetings/attendance.entity';
import { Meeting } from '../meetings/meeting.entity';
import type { BoardRoom } from './board-room';
import { quorumOf } from './quorum';

/**
 * Who attends the meeting now: the members connected to its room (every process), and the
 * members who attended by voting over the API. Quorum is computed from that list; the decision
 * keeps it as it stood when signed.
 */
export async function presenceOf(
  em: EntityManager,
  room: BoardRoom,
  meetingId: string,
): Promise<PresenceView> {
  const meeting = await em.findOneOrFail(Meeting, meetingId, { populate: ['board'] });
  const boardId = meeting.board.id;
  const inRoom = await room.membersInRoom(meetingId, boardId);
  const seen = new Set(inRoom.map((member) => member.userId));
  const byVote = await em.find(
    Attendance,
    { meeting: meetingId, via: 'vote', user: { $nin: [...seen] } },
    { populate: ['user'] },
  );
  const remote: PresentMember[] = [];
  if (byVote.length) {
    const memberships = await em.find(BoardMembership, {
      board: boardId,
      user: { $in: byVote.map((row) => row.user.id), isActive: true },
    });
    const specialtyOf = new Map(memberships.map((m) => [m.user.id, m.specialty]));
    for (const row of byVote) {
      const specialty = specialtyOf.get(row.user.id);
      if (!specialty || seen.has(row.user.id)) continue;
      seen.add(row.user.id);
      remote.push({
        userId: row.user.id,
        displayName: row.user.getEntity().displayName,
        specialty,
        isInRoom: false,
      });
    }
  }
  const members = [...inRoom, ...remote].sort((a, b) => a.displayName.localeCompare(b.displayName));
  return {
    meetingId,
    members,
    quorum: quorumOf(meeting.board.getEntity().requiredSpecialties, members),
    leadUserId: meeting.lead?.id ?? null,
  };
}
