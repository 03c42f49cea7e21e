import type { EntityManager } from '@mikro-orm/postgresql';
import type { AgendaItemView, CreateMeeting, MeetingSummary, MeetingView } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { BoardMembership } from '../boards/board-membership.entity';
import { Board } from '../boards/board.entity';
import { ClinicalCase } from '../cases/case.entity';
import { User } from '../users/user.entity';
import { AgendaItem } from './agenda-item.entity';
import { Meeting } from './meeting.entity';

/**
 * Meeting rules. A board's meetings are seen by its members and by administrators; a presenting
 * physician or a proceduralist of the board, or an administrator, schedules one and names its
 * chair among the board's members. The presenting physician of a case that is ready for board
 * puts it on a scheduled meeting of its board (the case becomes `on agenda`); the chair orders
 * the agenda and may move an item to another scheduled meeting of the same board.
 */
export class MeetingService {
  constructor(private readonly em: EntityManager) {}

  async listForBoard(user: SignedInUser, boardId: string): Promise<MeetingSummary[]> {
    await this.findVisibleBoard(user, boardId);
    const meetings = await this.em.find(
      Meeting,
      { board: boardId },
      { orderBy: { startsAt: 'asc' }, populate: ['board', 'chair'] },
    );
    return this.toSummaries(meetings);
  }

  /** The meetings of every board the user belongs to, oldest first. */
  async listMine(user: SignedInUser): Promise<MeetingSummary[]> {
    const boardIds = [...user.memberships.keys()];
    if (boardIds.length === 0) return [];
    const meetings = await this.em.find(
      Meeting,
      { board: { $in: boardIds } },
      { orderBy: { startsAt: 'asc' }, populate: ['board', 'chair'] },
    );
    return this.toSummaries(meetings);
  }

  async get(user: SignedInUser, meetingId: string): Promise<MeetingView> {
    return this.toView(await this.findVisible(user, meetingId));
  }

  async schedule(
    user: SignedInUser,
    actor: Actor,
    boardId: string,
    body: CreateMeeting,
  ): Promise<MeetingView> {
    const board = await this.findVisibleBoard(user, boardId);
    const isBoardClinician =
      user.memberships.has(board.id) && hasRole(user, 'presenting-physician', 'proceduralist');
    if (!isBoardClinician && !hasRole(user, 'administrator')) {
      throw new ForbiddenError(
        'Meetings are scheduled by a presenting physician or a proceduralist of the board, or an administrator.',
      );
    }
    const chairMembership = await this.em.findOne(BoardMembership, {
      board: board.id,
      user: { id: body.chairId, isActive: true },
    });
    if (!chairMembership) {
      const message = 'The chair must be an active member of the board.';
      throw new ValidationError(`chairId: ${message}`, [{ path: 'chairId', message }]);
    }
    const meeting = new Meeting({
      board: this.em.getReference(Board, board.id, { wrapped: true }),
      startsAt: new Date(body.startsAt),
      durationMin: body.durationMin,
      chair: this.em.getReference(User, body.chairId, { wrapped: true }),
      scheduledBy: this.em.getReference(User, user.id, { wrapped: true }),
    });
    meeting.place = body.place ?? null;
    this.em.persist(meeting);
    recordAudit(this.em, actor, {
      action: 'meeting.schedule',
      entityType: 'meeting',
      entityId: meeting.id,
      detail: { boardId: board.id, chairId: body.chairId },
    });
    await this.em.flush();
    return this.get(user, meeting.id);
  }

  async addToAgenda(
    user: SignedInUser,
    actor: Actor,
    meetingId: string,
    caseId: string,
  ): Promise<MeetingView> {
    await this.em.transactional(async (em) => {
      const meeting = await this.findScheduled(em, user, meetingId);
      const found = await em.findOne(ClinicalCase, { id: caseId, board: meeting.board.id });
      if (!found || !user.memberships.has(found.board.id)) {
        const message = 'The case is not one of this board’s cases.';
        throw new ValidationError(`caseId: ${message}`, [{ path: 'caseId', message }]);
      }
      if (!hasRole(user, 'presenting-physician') || found.presenter.id !== user.id) {
        throw new ForbiddenError('Only the presenting physician of the case puts it on an agenda.');
      }
      if (found.status !== 'ready-for-board') {
        throw new ConflictError(
          `Only a case that is ready for board goes on an agenda; this one is ${found.status}.`,
        );
      }
      const last = await em.findOne(
        AgendaItem,
        { meeting: meeting.id },
        { orderBy: { position: 'desc' } },
      );
      em.persist(
        new AgendaItem({
          meeting: em.getReference(Meeting, meeting.id, { wrapped: true }),
          clinicalCase: em.getReference(ClinicalCase, found.id, { wrapped: true }),
          position: (last?.position ?? 0) + 1,
          addedBy: em.getReference(User, user.id, { wrapped: true }),
        }),
      );
      found.status = 'on-agenda';
      recordAudit(em, actor, {
        action: 'agenda.add',
        entityType: 'meeting',
        entityId: meeting.id,
        detail: { caseId: found.id },
      });
    });
    return this.get(user, meetingId);
  }

  /** The chair gives the whole agenda in its new order. */
  async order(
    user: SignedInUser,
    actor: Actor,
    meetingId: string,
    itemIds: readonly string[],
  ): Promise<MeetingView> {
    await this.em.transactional(async (em) => {
      const meeting = await this.findScheduled(em, user, meetingId);
      this.assertChair(user, meeting);
      const items = await em.find(AgendaItem, { meeting: meeting.id });
      const given = new Set(itemIds);
      if (given.size !== itemIds.length || items.some((item) => !given.has(item.id))) {
        const message = 'List every item of the agenda exactly once.';
        throw new ValidationError(`itemIds: ${message}`, [{ path: 'itemIds', message }]);
      }
      if (items.length !== itemIds.length) {
        const message = 'An item listed is not on this agenda.';
        throw new ValidationError(`itemIds: ${message}`, [{ path: 'itemIds', message }]);
      }
      const byId = new Map(items.map((item) => [item.id, item]));
      itemIds.forEach((id, index) => {
        const item = byId.get(id);
        if (item) item.position = index + 1;
      });
      recordAudit(em, actor, {
        action: 'agenda.order',
        entityType: 'meeting',
        entityId: meeting.id,
        detail: { count: items.length },
      });
    });
    return this.get(user, meetingId);
  }

  /** The chair moves an item to another scheduled meeting of the board, at its end. */
  async move(
    user: SignedInUser,
    actor: Actor,
    itemId: string,
    targetMeetingId: string,
  ): Promise<{ view: MeetingView; movedFrom: string }> {
    let movedFrom = '';
    await this.em.transactional(async (em) => {
      const item: AgendaItem | null = await em.findOne(AgendaItem, itemId, {
        populate: ['meeting'],
      });
      if (!item || !user.memberships.has(item.meeting.getEntity().board.id)) {
        throw new NotFoundError('The agenda item');
      }
      const from = item.meeting.getEntity();
      movedFrom = from.id;
      this.assertChair(user, from);
      if (from.state !== 'scheduled') {
        throw new ConflictError('Only an item of a scheduled meeting is moved.');
      }
      const target = await this.findScheduled(em, user, targetMeetingId);
      if (target.board.id !== from.board.id || target.id === from.id) {
        const message = 'Move the item to another scheduled meeting of the same board.';
        throw new ValidationError(`meetingId: ${message}`, [{ path: 'meetingId', message }]);
      }
      const last = await em.findOne(
        AgendaItem,
        { meeting: target.id },
        { orderBy: { position: 'desc' } },
      );
      const leaving = item.position;
      item.meeting = em.getReference(Meeting, target.id, { wrapped: true });
      item.position = (last?.position ?? 0) + 1;
      const behind = await em.find(AgendaItem, {
        meeting: from.id,
        position: { $gt: leaving },
        id: { $ne: item.id },
      });
      for (const other of behind) other.position -= 1;
      recordAudit(em, actor, {
        action: 'agenda.move',
        entityType: 'meeting',
        entityId: target.id,
        detail: { fromMeetingId: from.id, caseId: item.clinicalCase.id },
      });
    });
    return { view: await this.get(user, targetMeetingId), movedFrom };
  }

  /** The next scheduled or running meeting of each case that is on an agenda, by case id. */
  async nextMeetingOf(caseIds: readonly string[]): Promise<Map<string, string>> {
    if (caseIds.length === 0) return new Map();
    const items = await this.em.find(
      AgendaItem,
      {
        clinicalCase: { $in: [...caseIds] },
        closedAt: null,
        meeting: { state: { $ne: 'closed' } },
      },
      { populate: ['meeting'] },
    );
    return new Map(
      items.map((item) => [item.clinicalCase.id, item.meeting.getEntity().startsAt.toISOString()]),
    );
  }

  private assertChair(user: SignedInUser, meeting: Meeting): void {
    if (meeting.chair.id !== user.id) {
      throw new ForbiddenError('Only the chair of the meeting orders or moves its agenda.');
    }
  }

  private async findVisibleBoard(user: SignedInUser, boardId: string): Promise<Board> {
    const board = await this.em.findOne(Board, boardId);
    if (!board || !(user.memberships.has(board.id) || hasRole(user, 'administrator'))) {
      throw new NotFoundError('The board');
    }
    return board;
  }

  private async findVisible(user: SignedInUser, meetingId: string): Promise<Meeting> {
    const meeting = await this.em.findOne(Meeting, meetingId, {
      populate: ['board', 'chair'],
    });
    if (!meeting || !(user.memberships.has(meeting.board.id) || hasRole(user, 'administrator'))) {
      throw new NotFoundError('The meeting');
    }
    return meeting;
  }

  private async findScheduled(
    em: EntityManager,
    user: SignedInUser,
    meetingId: string,
  ): Promise<Meeting> {
    const meeting = await em.findOne(Meeting, meetingId);
    if (!meeting || !user.memberships.has(meeting.board.id)) {
      throw new NotFoundError('The meeting');
    }
    if (meeting.state !== 'scheduled') {
      throw new ConflictError(`The meeting is ${meeting.state}; its agenda no longer changes.`);
    }
    return meeting;
  }

  private async toSummaries(meetings: Meeting[]): Promise<MeetingSummary[]> {
    const counts = new Map<string, number>();
    if (meetings.length) {
      const items = await this.em.find(AgendaItem, {
        meeting: { $in: meetings.map((meeting) => meeting.id) },
      });
      for (const item of items) {
        counts.set(item.meeting.id, (counts.get(item.meeting.id) ?? 0) + 1);
      }
    }
    return meetings.map((meeting) => toSummary(meeting, counts.get(meeting.id) ?? 0));
  }

  private async toView(meeting: Meeting): Promise<MeetingView> {
    const items = await this.em.find(
      AgendaItem,
      { meeting: meeting.id },
      { orderBy: { position: 'asc' }, populate: ['clinicalCase', 'clinicalCase.presenter'] },
    );
    const agenda: AgendaItemView[] = items.map((item) => {
      const found = item.clinicalCase.getEntity();
      return {
        id: item.id,
        position: item.position,
        caseId: found.id,
        caseCode: found.caseCode,
        primaryDiagnosis: found.primaryDiagnosis,
        caseStatus: found.status,
        presenterName: found.presenter.getEntity().displayName,
        isClosed: item.closedAt !== null,
      };
    });
    return {
      ...toSummary(meeting, agenda.length),
      agenda,
      requiredSpecialties: [...meeting.board.getEntity().requiredSpecialties],
    };
  }
}

function toSummary(meeting: Meeting, agendaCount: number): MeetingSummary {
  return {
    id: meeting.id,
    boardId: meeting.board.id,
    boardName: meeting.board.getEntity().name,
    startsAt: meeting.startsAt.toISOString(),
    durationMin: meeting.durationMin,
    chair: { id: meeting.chair.id, displayName: meeting.chair.getEntity().displayName },
    place: meeting.place,
    state: meeting.state,
    agendaCount,
  };
}
