import { createHash } from 'node:crypto';
import { LockMode } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import type {
  MinutesAttendance,
  MinutesContent,
  MinutesItem,
  QuorumView,
  VerdictLevel,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { AppError, ConflictError, ForbiddenError, NotFoundError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit, writeAudit } from '../audit/audit.service';
import type { BoardRoom } from '../board-session/board-room';
import { presenceOf } from '../board-session/presence';
import { ClinicalCase } from '../cases/case.entity';
import { loadDecisionViews } from '../decisions/decision-view';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { User } from '../users/user.entity';
import { ItemComment } from '../votes/comment.entity';
import { tallyOf } from '../votes/tally';
import { AgendaItem } from './agenda-item.entity';
import { Attendance } from './attendance.entity';
import { Meeting } from './meeting.entity';
import { Minutes } from './minutes.entity';

/** The stored minutes as written once: `content` is the JSON text itself, never re-serialised. */
export interface StoredMinutes {
  meetingId: string;
  frozenAt: Date;
  sha256: string;
  content: string;
}

/**
 * The `MinutesView` body around the stored text: the content is spliced in verbatim, so the
 * answer is the same bytes on every read, whatever has changed since (names, amendments …).
 */
export function minutesBody(minutes: StoredMinutes): string {
  return (
    `{"meetingId":${JSON.stringify(minutes.meetingId)},` +
    `"frozenAt":${JSON.stringify(minutes.frozenAt.toISOString())},` +
    `"sha256":${JSON.stringify(minutes.sha256)},` +
    `"content":${minutes.content}}`
  );
}

/**
 * Closing a meeting and its minutes (module README): the chair closes a scheduled or running
 * meeting; every open item closes, the cases left undecided go back to `ready-for-board`,
 * whoever is still in the room is marked as left, and the minutes are written once, in the
 * same transaction, as JSON text with its SHA-256. Members of the board and administrators
 * read them.
 */
export class MinutesService {
  constructor(
    private readonly em: EntityManager,
    private readonly room: BoardRoom,
  ) {}

  async close(user: SignedInUser, actor: Actor, meetingId: string): Promise<StoredMinutes> {
    const meeting = await this.findVisible(user, meetingId);
    if (meeting.chair.id !== user.id) {
      throw new ForbiddenError('Only the chair of the meeting closes it.');
    }
    if (meeting.state === 'closed') throw new ConflictError('The meeting is closed already.');
    // Asked before the transaction: the room may span other server processes.
    const { quorum } = await presenceOf(this.em, this.room, meeting.id);

    const stored = await this.em.transactional(async (em) => {
      // The meeting first, for update: a vote or a decision under way (they lock it for share)
      // finishes before the close, or waits and then finds the meeting closed.
      const locked = await em.findOneOrFail(Meeting, meeting.id, {
        lockMode: LockMode.PESSIMISTIC_WRITE,
        refresh: true,
      });
      if (locked.state === 'closed') throw new ConflictError('The meeting is closed already.');
      const now = new Date();
      locked.state = 'closed';
      locked.closedAt = now;
      locked.closedBy = em.getReference(User, user.id, { wrapped: true });

      const open = await em.find(
        AgendaItem,
        { meeting: meeting.id, closedAt: null },
        { lockMode: LockMode.PESSIMISTIC_WRITE, refresh: true },
      );
      const returned: string[] = [];
      if (open.length) {
        const cases = await em.find(
          ClinicalCase,
          { id: { $in: open.map((item) => item.clinicalCase.id) } },
          { lockMode: LockMode.PESSIMISTIC_WRITE, refresh: true },
        );
        for (const found of cases) {
          // Undecided: it goes on a later agenda.
          if (found.status === 'on-agenda') {
            found.status = 'ready-for-board';
            returned.push(found.id);
          }
        }
        for (const item of open) item.closedAt = now;
      }
      const present = await em.find(Attendance, { meeting: meeting.id, leftAt: null });
      for (const row of present) row.leftAt = now;
      await em.flush();

      const content = JSON.stringify(await this.contentOf(em, locked, quorum));
      const sha256 = createHash('sha256').update(content, 'utf8').digest('hex');
      const minutes = new Minutes({
        meeting: em.getReference(Meeting, meeting.id, { wrapped: true }),
        content,
        sha256,
      });
      minutes.frozenAt = now;
      em.persist(minutes);
      recordAudit(em, actor, {
        action: 'meeting.close',
        entityType: 'meeting',
        entityId: meeting.id,
        detail: {
          itemsClosed: open.length,
          casesReturnedToReady: returned,
          attendanceClosed: present.length,
          sha256,
        },
      });
      return { meetingId: meeting.id, frozenAt: now, sha256, content };
    });

    this.room.toMeeting(meeting.id).emit('agenda:changed', {
      meetingId: meeting.id,
      reason: 'closed',
    });
    return stored;
  }

  async read(user: SignedInUser, actor: Actor, meetingId: string): Promise<StoredMinutes> {
    const meeting = await this.findVisible(user, meetingId);
    const minutes = await this.em.findOne(Minutes, { meeting: meeting.id });
    if (!minutes) {
      throw new AppError(
        404,
        'Not found',
        'The meeting has no minutes yet: they are written when its chair closes it.',
      );
    }
    await writeAudit(this.em, actor, {
      action: 'minutes.read',
      entityType: 'meeting',
      entityId: meeting.id,
    });
    return {
      meetingId: meeting.id,
      frozenAt: minutes.frozenAt,
      sha256: minutes.sha256,
      content: minutes.content,
    };
  }

  /** Members of the board and administrators; anyone else hears 404. */
  private async findVisible(user: SignedInUser, meetingId: string): Promise<Meeting> {
    const meeting = await this.em.findOne(Meeting, meetingId);
    if (!meeting || !(user.memberships.has(meeting.board.id) || hasRole(user, 'administrator'))) {
      throw new NotFoundError('The meeting');
    }
    return meeting;
  }

  /** Everything the minutes hold, read inside the closing transaction. */
  private async contentOf(
    em: EntityManager,
    meeting: Meeting,
    quorum: QuorumView,
  ): Promise<MinutesContent> {
    await em.populate(meeting, ['board', 'chair', 'closedBy']);
    const closedAt = meeting.closedAt ?? new Date();
    return {
      meetingId: meeting.id,
      boardName: meeting.board.getEntity().name,
      startsAt: meeting.startsAt.toISOString(),
      chair: meeting.chair.getEntity().displayName,
      place: meeting.place,
      closedAt: closedAt.toISOString(),
      closedBy: meeting.closedBy?.getEntity().displayName ?? '',
      quorum,
      attendance: await this.attendanceOf(em, meeting.id),
      items: await this.itemsOf(em, meeting.id),
    };
  }

  /** One line per member: first join, last leave, and whether they were ever in the room. */
  private async attendanceOf(em: EntityManager, meetingId: string): Promise<MinutesAttendance[]> {
    const rows = await em.find(
      Attendance,
      { meeting: meetingId },
      { populate: ['user'], orderBy: { joinedAt: 'asc', id: 'asc' } },
    );
    const byUser = new Map<string, MinutesAttendance>();
    for (const row of rows) {
      const left = row.leftAt?.toISOString() ?? null;
      const seen = byUser.get(row.user.id);
      if (!seen) {
        byUser.set(row.user.id, {
          userId: row.user.id,
          displayName: row.user.getEntity().displayName,
          specialty: row.specialty,
          firstJoinedAt: row.joinedAt.toISOString(),
          lastLeftAt: left,
          via: row.via,
        });
        continue;
      }
      seen.specialty ??= row.specialty;
      // A visit not yet left keeps the member present (null); otherwise the latest leave.
      seen.lastLeftAt =
        seen.lastLeftAt === null || left === null
          ? null
          : left > seen.lastLeftAt
            ? left
            : seen.lastLeftAt;
      if (row.via === 'room') seen.via = 'room';
    }
    return [...byUser.values()];
  }

  private async itemsOf(em: EntityManager, meetingId: string): Promise<MinutesItem[]> {
    const items = await em.find(
      AgendaItem,
      { meeting: meetingId },
      { orderBy: { position: 'asc' }, populate: ['clinicalCase', 'clinicalCase.presenter'] },
    );
    const caseIds = items.map((item) => item.clinicalCase.id);
    const plans = caseIds.length
      ? await em.find(
          NeedlePlan,
          { clinicalCase: { $in: caseIds }, status: { $ne: 'draft' } },
          {
            orderBy: { createdAt: 'asc', id: 'asc' },
            fields: ['id', 'name', 'status', 'clinicalCase'],
          },
        )
      : [];
    const verdicts = await newestVerdicts(
      em,
      plans.map((plan) => plan.id),
    );
    const minutesItems: MinutesItem[] = [];
    for (const item of items) {
      const found = item.clinicalCase.getEntity();
      const comments = await em.find(
        ItemComment,
        { agendaItem: item.id, isForMinutes: true },
        { populate: ['author'], orderBy: { createdAt: 'asc', id: 'asc' } },
      );
      const [decision] = await loadDecisionViews(em, { agendaItem: item.id });
      minutesItems.push({
        position: item.position,
        caseId: found.id,
        caseCode: found.caseCode,
        presenterName: found.presenter.getEntity().displayName,
        plans: plans
          .filter((plan) => plan.clinicalCase.id === found.id)
          .map((plan) => ({
            id: plan.id,
            name: plan.name,
            status: plan.status,
            verdict: verdicts.get(plan.id) ?? null,
          })),
        tally: (await tallyOf(em, item.id)).rows,
        comments: comments.map((comment) => ({
          author: comment.author.getEntity().displayName,
          body: comment.body,
          createdAt: comment.createdAt.toISOString(),
        })),
        decision: decision ?? null,
      });
    }
    return minutesItems;
  }
}

/**
 * The verdict level of each plan's newest assessment, when that assessment has finished; a plan
 * whose newest run is queued, running or failed has none to report. Only the level is read from
 * the stored result, not the whole result.
 */
async function newestVerdicts(
  em: EntityManager,
  planIds: string[],
): Promise<Map<string, VerdictLevel>> {
  if (planIds.length === 0) return new Map();
  const rows = await em.execute<{ plan_id: string; status: string; level: VerdictLevel | null }[]>(
    `select distinct on (plan_id) plan_id, status, result -> 'verdict' ->> 'level' as level
       from assessment
      where plan_id in (${planIds.map(() => '?').join(', ')})
      order by plan_id, created_at desc, id desc`,
    planIds,
  );
  const verdicts = new Map<string, VerdictLevel>();
  for (const row of rows) {
    if (row.status === 'done' && row.level) verdicts.set(row.plan_id, row.level);
  }
  return verdicts;
}
