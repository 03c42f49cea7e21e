import type { EntityManager } from '@mikro-orm/postgresql';
import type { AgendaItemVotes, CastVote, TallyView, VoteView } from '@emberline/shared';
import { ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import type { BoardRoom } from '../board-session/board-room';
import { presenceOf } from '../board-session/presence';
import { ClinicalCase } from '../cases/case.entity';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { Attendance } from '../meetings/attendance.entity';
import { Meeting } from '../meetings/meeting.entity';
import { User } from '../users/user.entity';
import { assertClinicalMember, findVisibleItem, lockOpenItem } from './agenda-item-access';
import { optionsOf, tallyOf } from './tally';
import { Vote } from './vote.entity';

/**
 * Votes on an agenda item. Each member holds at most one position per option (support, oppose,
 * abstain); casting the same position again changes nothing, so a retried request or event
 * counts once, and `position: null` withdraws. The room hears the new tally after every change.
 * A member who votes without being in the room attends the meeting by vote.
 */
export class VoteService {
  constructor(
    private readonly em: EntityManager,
    private readonly room: BoardRoom,
  ) {}

  /** The item's tally with the user's own positions. */
  async tally(user: SignedInUser, itemId: string): Promise<TallyView> {
    const item = await findVisibleItem(this.em, user, itemId);
    return { ...(await tallyOf(this.em, item.id)), mine: await mineOf(this.em, user, item.id) };
  }

  async cast(user: SignedInUser, actor: Actor, itemId: string, body: CastVote): Promise<TallyView> {
    const seen = await findVisibleItem(this.em, user, itemId);
    const meetingId = seen.meeting.id;
    const boardId = seen.meeting.getEntity().board.id;
    assertClinicalMember(user, boardId, 'vote');
    // Asked before the transaction: it may reach other server processes.
    const isInRoom = (await this.room.socketsOf(meetingId, user.id)) > 0;
    const comment = body.comment === undefined ? undefined : body.comment || null;

    const { isChanged, isNewAttendance } = await this.em.transactional(async (em) => {
      const { item } = await lockOpenItem(em, seen, 'Voting has closed on this agenda item.');
      const options = await optionsOf(em, item.clinicalCase.id);
      if (!options.some((candidate) => candidate.option === body.option)) {
        const message =
          'Not an option of this agenda item: vote on an assessed plan of the case or a treatment.';
        throw new ValidationError(`option: ${message}`, [{ path: 'option', message }]);
      }
      const existing = await em.findOne(Vote, {
        agendaItem: item.id,
        voter: user.id,
        option: body.option,
      });
      let changed = false;
      if (body.position === null) {
        if (existing) {
          em.remove(existing);
          changed = true;
        }
      } else if (!existing) {
        const vote = new Vote({
          agendaItem: em.getReference(AgendaItem, item.id, { wrapped: true }),
          voter: em.getReference(User, user.id, { wrapped: true }),
          option: body.option,
          position: body.position,
        });
        vote.comment = comment ?? null;
        em.persist(vote);
        changed = true;
      } else if (existing.position !== body.position) {
        // A new position with no comment drops the old one: it explained the other position.
        existing.position = body.position;
        existing.comment = comment ?? null;
        changed = true;
      } else if (comment !== undefined && comment !== existing.comment) {
        existing.comment = comment;
        changed = true;
      }
      if (changed) {
        recordAudit(em, actor, {
          action: 'vote.cast',
          entityType: 'agenda-item',
          entityId: item.id,
          detail: { option: body.option, position: body.position },
        });
      }
      const attended = isInRoom ? false : await this.attendByVote(em, meetingId, boardId, user);
      return { isChanged: changed, isNewAttendance: attended };
    });

    // Read afresh: the identity map of the request still holds what it saw before the change.
    const fresh = this.em.fork();
    const tally = await tallyOf(fresh, itemId);
    if (isChanged) this.room.toMeeting(meetingId).emit('vote:tally', tally);
    if (isNewAttendance) {
      // Quorum counts members who attend by vote.
      this.room
        .toMeeting(meetingId)
        .emit('presence', await presenceOf(fresh, this.room, meetingId));
    }
    return { ...tally, mine: await mineOf(fresh, user, itemId) };
  }

  /** Every position cast on the case's agenda items, oldest meeting first. */
  async listForCase(user: SignedInUser, caseId: string): Promise<AgendaItemVotes[]> {
    const found = await this.em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId);
    const items = await this.em.find(
      AgendaItem,
      { clinicalCase: found.id },
      { populate: ['meeting'], orderBy: { meeting: { startsAt: 'asc' }, createdAt: 'asc' } },
    );
    if (items.length === 0) return [];
    const options = await optionsOf(this.em, found.id);
    const rank = new Map(options.map((option, index) => [option.option, index]));
    const votes = await this.em.find(
      Vote,
      { agendaItem: { $in: items.map((item) => item.id) } },
      { populate: ['voter'], orderBy: { createdAt: 'asc', id: 'asc' } },
    );
    return items.map((item) => ({
      agendaItemId: item.id,
      meetingId: item.meeting.id,
      meetingStartsAt: item.meeting.getEntity().startsAt.toISOString(),
      isClosed: item.closedAt !== null || item.meeting.getEntity().state === 'closed',
      votes: votes
        .filter((vote) => vote.agendaItem.id === item.id)
        .sort(
          (a, b) => (rank.get(a.option) ?? options.length) - (rank.get(b.option) ?? options.length),
        )
        .map(toVoteView),
    }));
  }

  /**
   * One attendance by vote per member and meeting. The advisory lock keeps two votes of the
   * same member on two items at once from both writing one.
   */
  private async attendByVote(
    em: EntityManager,
    meetingId: string,
    boardId: string,
    user: SignedInUser,
  ): Promise<boolean> {
    await em.execute('select pg_advisory_xact_lock(hashtextextended(?, 0))', [
      `attendance-by-vote:${meetingId}:${user.id}`,
    ]);
    const existing = await em.count(Attendance, { meeting: meetingId, user: user.id, via: 'vote' });
    if (existing > 0) return false;
    const attendance = new Attendance({
      meeting: em.getReference(Meeting, meetingId, { wrapped: true }),
      user: em.getReference(User, user.id, { wrapped: true }),
      specialty: user.memberships.get(boardId) ?? null,
    });
    attendance.via = 'vote';
    // Joined and left at once: the member was never in the room.
    attendance.leftAt = attendance.joinedAt;
    em.persist(attendance);
    return true;
  }
}

async function mineOf(em: EntityManager, user: SignedInUser, itemId: string): Promise<VoteView[]> {
  const votes = await em.find(
    Vote,
    { agendaItem: itemId, voter: user.id },
    { populate: ['voter'], orderBy: { createdAt: 'asc', id: 'asc' } },
  );
  return votes.map(toVoteView);
}

export function toVoteView(vote: Vote): VoteView {
  const voter = vote.voter.getEntity();
  return {
    option: vote.option,
    position: vote.position,
    comment: vote.comment,
    voter: { id: voter.id, displayName: voter.displayName },
    castAt: vote.updatedAt.toISOString(),
  };
}
