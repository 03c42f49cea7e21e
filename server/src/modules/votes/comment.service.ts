import type { EntityManager } from '@mikro-orm/postgresql';
import type { CommentView, PostComment } from '@emberline/shared';
import { ConflictError, ForbiddenError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import type { BoardRoom } from '../board-session/board-room';
import { ClinicalCase } from '../cases/case.entity';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { User } from '../users/user.entity';
import {
  assertClinicalMember,
  canSeeBoard,
  findVisibleItem,
  lockOpenItem,
} from './agenda-item-access';
import { ItemComment } from './comment.entity';

/**
 * Threaded comments on an agenda item. The clinical members of the board write them while the
 * item is open; an answer names a comment of the same item. The meeting's chair marks those that
 * go into the minutes, until the meeting closes and its minutes are frozen.
 */
export class CommentService {
  constructor(
    private readonly em: EntityManager,
    private readonly room: BoardRoom,
  ) {}

  /** The item's comments, oldest first; answers follow the order they were written in. */
  async listForItem(user: SignedInUser, itemId: string): Promise<CommentView[]> {
    const item = await findVisibleItem(this.em, user, itemId);
    const comments = await this.em.find(
      ItemComment,
      { agendaItem: item.id },
      { populate: ['author', 'agendaItem'], orderBy: { createdAt: 'asc', id: 'asc' } },
    );
    return comments.map(toCommentView);
  }

  /** Every comment on the case's agenda items, in any meeting, oldest first. */
  async listForCase(user: SignedInUser, caseId: string): Promise<CommentView[]> {
    const found = await this.em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId);
    const comments = await this.em.find(
      ItemComment,
      { agendaItem: { clinicalCase: found.id } },
      { populate: ['author', 'agendaItem'], orderBy: { createdAt: 'asc', id: 'asc' } },
    );
    return comments.map(toCommentView);
  }

  async post(
    user: SignedInUser,
    actor: Actor,
    itemId: string,
    body: PostComment,
  ): Promise<CommentView> {
    const seen = await findVisibleItem(this.em, user, itemId);
    assertClinicalMember(user, seen.meeting.getEntity().board.id, 'comment');
    const id = await this.em.transactional(async (em) => {
      const { item } = await lockOpenItem(
        em,
        seen,
        'The discussion of this agenda item has closed.',
      );
      const comment = new ItemComment({
        agendaItem: em.getReference(AgendaItem, item.id, { wrapped: true }),
        author: em.getReference(User, user.id, { wrapped: true }),
        body: body.body,
      });
      if (body.parentId) {
        const parent = await em.findOne(ItemComment, {
          id: body.parentId,
          agendaItem: item.id,
        });
        if (!parent) {
          const message = 'Answer a comment of the same agenda item.';
          throw new ValidationError(`parentId: ${message}`, [{ path: 'parentId', message }]);
        }
        comment.parent = em.getReference(ItemComment, parent.id, { wrapped: true });
      }
      em.persist(comment);
      recordAudit(em, actor, {
        action: 'comment.post',
        entityType: 'agenda-item',
        entityId: item.id,
        detail: { commentId: comment.id, parentId: body.parentId ?? null },
      });
      return comment.id;
    });
    const view = await this.read(id);
    this.room.toMeeting(seen.meeting.id).emit('comment:posted', view);
    return view;
  }

  /** The chair marks a comment for the minutes, or takes the mark off. */
  async mark(
    user: SignedInUser,
    actor: Actor,
    commentId: string,
    isForMinutes: boolean,
  ): Promise<CommentView> {
    await this.em.transactional(async (em) => {
      const comment = await em.findOne(ItemComment, commentId, {
        populate: ['agendaItem.meeting'],
      });
      const meeting = comment?.agendaItem.getEntity().meeting.getEntity();
      if (!comment || !meeting || !canSeeBoard(user, meeting.board.id)) {
        throw new NotFoundError('The comment');
      }
      if (meeting.chair.id !== user.id) {
        throw new ForbiddenError('Only the chair of the meeting marks comments for the minutes.');
      }
      if (meeting.state === 'closed') {
        throw new ConflictError('The meeting has closed; its minutes no longer change.');
      }
      if (comment.isForMinutes === isForMinutes) return;
      comment.isForMinutes = isForMinutes;
      recordAudit(em, actor, {
        action: 'comment.mark',
        entityType: 'comment',
        entityId: comment.id,
        detail: { isForMinutes },
      });
    });
    return this.read(commentId);
  }

  private async read(commentId: string): Promise<CommentView> {
    const comment = await this.em.fork().findOneOrFail(ItemComment, commentId, {
      populate: ['author', 'agendaItem'],
    });
    return toCommentView(comment);
  }
}

export function toCommentView(comment: ItemComment): CommentView {
  const author = comment.author.getEntity();
  return {
    id: comment.id,
    agendaItemId: comment.agendaItem.id,
    caseId: comment.agendaItem.getEntity().clinicalCase.id,
    parentId: comment.parent?.id ?? null,
    author: { id: author.id, displayName: author.displayName },
    body: comment.body,
    isForMinutes: comment.isForMinutes,
    createdAt: comment.createdAt.toISOString(),
  };
}
