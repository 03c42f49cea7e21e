import { randomUUID } from 'node:crypto';
import type { ReadStream } from 'node:fs';
import { LockMode } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import { keyImageLimits, type CreateKeyImage, type KeyImageView } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ForbiddenError, NotFoundError, ValidationError } from '../../common/errors';
import { logger } from '../../common/logger';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit, writeAudit } from '../audit/audit.service';
import { ClinicalCase } from '../cases/case.entity';
import { assertCaseOpenForChanges, isCaseOpenForChanges } from '../cases/case-open-for-changes';
import { visibilityFilter } from '../cases/case-visibility';
import type { FileStore } from '../imaging/file-store';
import { ImageSeries } from '../imaging/image-series.entity';
import { User } from '../users/user.entity';
import { clinicalRoles } from '../votes/agenda-item-access';
import { KeyImage } from './key-image.entity';
import { checkPng, PngRefusal } from './png-check';

/** The file store's folder of key images. */
export const keyImageFolder = 'key-images';

/**
 * Key images of a case (module README): kept by the clinical members of the case's board until
 * the decision, listed for whoever sees the case, removed by their author only.
 */
export class KeyImageService {
  constructor(
    private readonly em: EntityManager,
    private readonly store: FileStore,
  ) {}

  async list(user: SignedInUser, actor: Actor, caseId: string): Promise<KeyImageView[]> {
    const found = await this.findVisibleCase(user, caseId);
    const images = await this.em.find(
      KeyImage,
      { clinicalCase: found.id },
      { populate: ['author'], orderBy: { createdAt: 'asc', id: 'asc' } },
    );
    await writeAudit(this.em, actor, {
      action: 'key-images.list',
      entityType: 'case',
      entityId: found.id,
      detail: { count: images.length },
    });
    return images.map((image) => toKeyImageView(image, mayDelete(user, image, found)));
  }

  async create(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    meta: CreateKeyImage,
    png: Uint8Array,
  ): Promise<KeyImageView> {
    const found = await this.findVisibleCase(user, caseId);
    if (!user.memberships.has(found.board.id) || !hasRole(user, ...clinicalRoles)) {
      throw new ForbiddenError(
        'Only the presenting physicians, board members and proceduralists of the board keep key images.',
      );
    }
    assertCaseOpenForChanges(found);
    const series = await this.em.findOne(ImageSeries, {
      id: meta.seriesId,
      clinicalCase: found.id,
    });
    if (!series) {
      const message = 'Keep a view of a series of this case.';
      throw new ValidationError(`meta.seriesId: ${message}`, [{ path: 'meta.seriesId', message }]);
    }
    let checked;
    try {
      checked = checkPng(png, keyImageLimits.maxSidePx);
    } catch (error) {
      if (!(error instanceof PngRefusal)) throw error;
      throw new ValidationError(`image: ${error.message}`, [
        { path: 'image', message: error.message },
      ]);
    }
    const storageKey = `${keyImageFolder}/${randomUUID()}.png`;
    const bytes = await this.store.writeAtomically(storageKey, [checked.bytes]);
    try {
      const id = await this.whileOpen(found.id, (em) => {
        const image = new KeyImage({
          clinicalCase: em.getReference(ClinicalCase, found.id, { wrapped: true }),
          series: em.getReference(ImageSeries, series.id, { wrapped: true }),
          author: em.getReference(User, user.id, { wrapped: true }),
          pane: meta.pane,
          viewState: meta.viewState,
          storageKey,
          widthPx: checked.widthPx,
          heightPx: checked.heightPx,
          bytes,
        });
        image.caption = meta.caption || null;
        em.persist(image);
        recordAudit(em, actor, {
          action: 'key-image.create',
          entityType: 'key-image',
          entityId: image.id,
          detail: {
            caseId: found.id,
            seriesId: series.id,
            pane: meta.pane,
            bytes,
            droppedChunks: checked.dropped,
          },
        });
        return image.id;
      });
      const image = await this.em.fork().findOneOrFail(KeyImage, id, { populate: ['author'] });
      return toKeyImageView(image, true);
    } catch (error) {
      // No row points at the file: it goes, so that nothing is left behind unlisted.
      await this.store.remove(storageKey).catch(() => undefined);
      throw error;
    }
  }

  /** The stored PNG of a key image the user may see, opened for streaming; audited. */
  async openImage(
    user: SignedInUser,
    actor: Actor,
    keyImageId: string,
  ): Promise<{ stream: ReadStream; byteLength: number }> {
    const image = await this.findVisible(user, keyImageId);
    let file;
    try {
      file = await this.store.openRead(image.storageKey);
    } catch {
      throw new NotFoundError('The key image’s picture');
    }
    await writeAudit(this.em, actor, {
      action: 'key-image.read',
      entityType: 'key-image',
      entityId: image.id,
      detail: { caseId: image.clinicalCase.id },
    });
    return file;
  }

  async delete(user: SignedInUser, actor: Actor, keyImageId: string): Promise<void> {
    const image = await this.findVisible(user, keyImageId);
    if (image.author.id !== user.id) {
      throw new ForbiddenError('Only the author of a key image removes it.');
    }
    const caseId = image.clinicalCase.id;
    await this.whileOpen(caseId, async (em) => {
      em.remove(await em.findOneOrFail(KeyImage, image.id));
      recordAudit(em, actor, {
        action: 'key-image.delete',
        entityType: 'key-image',
        entityId: image.id,
        detail: { caseId },
      });
    });
    // The row went first: a failed removal leaves an unlisted file, never a row without one.
    await this.store.remove(image.storageKey).catch((error: unknown) => {
      logger.warn(`removing key image ${image.id} left its file behind: ${String(error)}`);
    });
  }

  /** A key image of a case the user sees; the same 404 as a missing one otherwise. */
  private async findVisible(user: SignedInUser, keyImageId: string): Promise<KeyImage> {
    const image = await this.em.findOne(KeyImage, keyImageId, { populate: ['author'] });
    if (!image) throw new NotFoundError('The key image');
    const found = await this.em.findOne(ClinicalCase, {
      $and: [{ id: image.clinicalCase.id }, visibilityFilter(user)],
    });
    if (!found) throw new NotFoundError('The key image');
    return image;
  }

  /** A write under a share lock on the case, its status read again (as annotations do). */
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

  private findVisibleCase(user: SignedInUser, caseId: string): Promise<ClinicalCase> {
    return this.em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId);
  }
}

function mayDelete(user: SignedInUser, image: KeyImage, found: ClinicalCase): boolean {
  return isCaseOpenForChanges(found.status) && image.author.id === user.id;
}

export function toKeyImageView(image: KeyImage, canDelete: boolean): KeyImageView {
  const author = image.author.getEntity();
  return {
    id: image.id,
    caseId: image.clinicalCase.id,
    seriesId: image.series.id,
    pane: image.pane,
    caption: image.caption,
    viewState: image.viewState,
    widthPx: image.widthPx,
    heightPx: image.heightPx,
    bytes: image.bytes,
    author: { id: author.id, displayName: author.displayName },
    createdAt: image.createdAt.toISOString(),
    imageUrl: `/api/key-images/${image.id}/image.png`,
    canDelete,
  };
}
