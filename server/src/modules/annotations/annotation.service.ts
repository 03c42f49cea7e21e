import { LockMode } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { AnnotationView, CreateAnnotation, UpdateAnnotation } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ForbiddenError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import type { BoardRoom } from '../board-session/board-room';
import { ClinicalCase } from '../cases/case.entity';
import { assertCaseOpenForChanges, isCaseOpenForChanges } from '../cases/case-open-for-changes';
import { visibilityFilter } from '../cases/case-visibility';
import { ImageSeries } from '../imaging/image-series.entity';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { Meeting } from '../meetings/meeting.entity';
import { User } from '../users/user.entity';
import { clinicalRoles } from '../votes/agenda-item-access';
import { Annotation } from './annotation.entity';

/**
 * Annotations on a case's series: points, lines and notes the clinical members of the board
 * make, before or during a meeting. The author changes or deletes their own; the chair of the
 * meeting whose open agenda item holds the case may change or delete anyone's (to tidy the shared
 * view). Once the case is decided they stay as they were. The room of that meeting hears of every
 * change.
 */
export class AnnotationService {
  constructor(
    private readonly em: EntityManager,
    private readonly room: BoardRoom,
  ) {}

  async list(user: SignedInUser, caseId: string): Promise<AnnotationView[]> {
    const found = await this.findVisibleCase(user, caseId);
    const meeting = await this.openMeetingOf(found.id);
    const annotations = await this.em.find(
      Annotation,
      { clinicalCase: found.id },
      { populate: ['author'], orderBy: { createdAt: 'asc', id: 'asc' } },
    );
    return annotations.map((annotation) => ({
      ...toAnnotationView(annotation),
      canEdit: mayEdit(user, annotation, found, meeting),
    }));
  }

  async create(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: CreateAnnotation,
  ): Promise<AnnotationView> {
    const found = await this.findVisibleCase(user, caseId);
    if (!user.memberships.has(found.board.id) || !hasRole(user, ...clinicalRoles)) {
      throw new ForbiddenError(
        'Only the presenting physicians, board members and proceduralists of the board annotate.',
      );
    }
    assertCaseOpenForChanges(found);
    const series = await this.em.findOne(ImageSeries, {
      id: body.seriesId,
      clinicalCase: found.id,
    });
    if (!series) {
      const message = 'Annotate a series of this case.';
      throw new ValidationError(`seriesId: ${message}`, [{ path: 'seriesId', message }]);
    }
    const meeting = await this.openMeetingOf(found.id);
    const id = await this.whileOpen(found.id, (em) => {
      const annotation = new Annotation({
        clinicalCase: em.getReference(ClinicalCase, found.id, { wrapped: true }),
        series: em.getReference(ImageSeries, series.id, { wrapped: true }),
        author: em.getReference(User, user.id, { wrapped: true }),
        kind: body.kind,
        points: body.points,
      });
      annotation.text = body.text || null;
      if (meeting?.state === 'in-session') {
        annotation.meeting = em.getReference(Meeting, meeting.id, { wrapped: true });
      }
      em.persist(annotation);
      recordAudit(em, actor, {
        action: 'annotation.create',
        entityType: 'annotation',
        entityId: annotation.id,
        detail: { caseId: found.id, seriesId: series.id, kind: body.kind },
      });
      return annotation.id;
    });
    const view = await this.read(id);
    if (meeting) this.room.toMeeting(meeting.id).emit('annotation:created', view);
    return { ...view, canEdit: true };
  }

  async update(
    user: SignedInUser,
    actor: Actor,
    annotationId: string,
    changes: UpdateAnnotation,
  ): Promise<AnnotationView> {
    const { annotation: seen, meeting } = await this.findEditable(user, annotationId);
    if (changes.points) {
      const expected = seen.kind === 'line' ? 2 : 1;
      if (changes.points.length !== expected) {
        const message = `A ${seen.kind} has ${expected} point${expected > 1 ? 's' : ''}`;
        throw new ValidationError(`points: ${message}`, [{ path: 'points', message }]);
      }
    }
    if (changes.text !== undefined && seen.kind === 'note' && !changes.text) {
      const message = 'A note needs its text';
      throw new ValidationError(`text: ${message}`, [{ path: 'text', message }]);
    }
    const isChanged = await this.whileOpen(seen.clinicalCase.id, async (em) => {
      const annotation = await em.findOneOrFail(Annotation, seen.id, { refresh: true });
      const before = { points: JSON.stringify(annotation.points), text: annotation.text };
      if (changes.points) annotation.points = changes.points;
      if (changes.text !== undefined) annotation.text = changes.text || null;
      const changed =
        before.points !== JSON.stringify(annotation.points) || before.text !== annotation.text;
      if (changed) {
        recordAudit(em, actor, {
          action: 'annotation.update',
          entityType: 'annotation',
          entityId: annotation.id,
          detail: {
            caseId: annotation.clinicalCase.id,
            fields: Object.keys(changes),
            byChair: annotation.author.id !== user.id,
          },
        });
      }
      return changed;
    });
    const view = await this.read(seen.id);
    if (isChanged && meeting) this.room.toMeeting(meeting.id).emit('annotation:updated', view);
    return { ...view, canEdit: true };
  }

  async delete(user: SignedInUser, actor: Actor, annotationId: string): Promise<void> {
    const { annotation: seen, meeting } = await this.findEditable(user, annotationId);
    const caseId = seen.clinicalCase.id;
    await this.whileOpen(caseId, async (em) => {
      em.remove(await em.findOneOrFail(Annotation, seen.id));
      recordAudit(em, actor, {
        action: 'annotation.delete',
        entityType: 'annotation',
        entityId: seen.id,
        detail: { caseId, byChair: seen.author.id !== user.id },
      });
    });
    if (meeting) {
      this.room.toMeeting(meeting.id).emit('annotation:deleted', { id: seen.id, caseId });
    }
  }

  /**
   * A write under a share lock on the case, its status read again: a decision signed meanwhile
   * (it locks the case for update) waits for this change, or this change sees the case decided
   * and answers 409.
   */
  private whileOpen<T>(caseId: string, write: (em: EntityManager) => T | Promise<T>): Promise<T> {
    return this.em.transactional(async (em) => {
      const locked = await em.findOneOrFail(ClinicalCase, caseId, {
        lockMode: LockMode.PESSIMISTIC_READ,
        refresh: true,
      });
      assertCaseOpenForChanges(locked);
      return write(em);
    });
  }

  /** 404 when the case is out of reach, 403 unless author or chair, 409 once decided. */
  private async findEditable(
    user: SignedInUser,
    annotationId: string,
  ): Promise<{ annotation: Annotation; meeting: Meeting | null }> {
    const annotation = await this.em.findOne(Annotation, annotationId, { populate: ['author'] });
    if (!annotation) throw new NotFoundError('The annotation');
    // A case out of reach hides its annotations too: the same 404 as a missing one.
    const found = await this.em.findOne(ClinicalCase, {
      $and: [{ id: annotation.clinicalCase.id }, visibilityFilter(user)],
    });
    if (!found) throw new NotFoundError('The annotation');
    const meeting = await this.openMeetingOf(found.id);
    if (annotation.author.id !== user.id && meeting?.chair.id !== user.id) {
      throw new ForbiddenError(
        'Only the author of an annotation, or the chair of the meeting discussing the case, changes it.',
      );
    }
    assertCaseOpenForChanges(found);
    return { annotation, meeting };
  }

  private findVisibleCase(user: SignedInUser, caseId: string): Promise<ClinicalCase> {
    return this.em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId);
  }

  /** The meeting whose open agenda item holds the case: its room hears of annotations. */
  private async openMeetingOf(caseId: string): Promise<Meeting | null> {
    const item = await this.em.findOne(
      AgendaItem,
      { clinicalCase: caseId, closedAt: null, meeting: { state: { $ne: 'closed' } } },
      { populate: ['meeting'] },
    );
    return item?.meeting.getEntity() ?? null;
  }

  private async read(annotationId: string): Promise<AnnotationView> {
    const annotation = await this.em.fork().findOneOrFail(Annotation, annotationId, {
      populate: ['author'],
    });
    return toAnnotationView(annotation);
  }
}

function mayEdit(
  user: SignedInUser,
  annotation: Annotation,
  found: ClinicalCase,
  meeting: Meeting | null,
): boolean {
  if (!isCaseOpenForChanges(found.status)) return false;
  return annotation.author.id === user.id || meeting?.chair.id === user.id;
}

/** The view as broadcast: without `canEdit`, which depends on who receives it. */
export function toAnnotationView(annotation: Annotation): AnnotationView {
  const author = annotation.author.getEntity();
  return {
    id: annotation.id,
    caseId: annotation.clinicalCase.id,
    seriesId: annotation.series.id,
    kind: annotation.kind,
    points: annotation.points,
    text: annotation.text,
    author: { id: author.id, displayName: author.displayName },
    meetingId: annotation.meeting?.id ?? null,
    createdAt: annotation.createdAt.toISOString(),
    updatedAt: annotation.updatedAt.toISOString(),
  };
}
