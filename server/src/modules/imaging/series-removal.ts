import type { EntityManager } from '@mikro-orm/postgresql';
import { lesionLabel, seriesLabel, type SeriesRemovalView } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, NotFoundError } from '../../common/errors';
import { logger } from '../../common/logger';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit, writeAudit } from '../audit/audit.service';
import { Annotation } from '../annotations/annotation.entity';
import { Assessment } from '../assessments/assessment.entity';
import { assertCaseOpenForChanges } from '../cases/case-open-for-changes';
import { visibilityFilter } from '../cases/case-visibility';
import { KeyImage } from '../key-images/key-image.entity';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { LabelMap } from '../structures/label-map.entity';
import { Structure } from '../structures/structure.entity';
import type { FileStore } from './file-store';
import { ImageSeries } from './image-series.entity';

/** The stores a removal clears: the volumes' and the label maps'. */
export interface SeriesRemovalStores {
  volumes: FileStore;
  labelMaps: FileStore;
}

/**
 * Removing a series of a case that is open for changes, by its presenting physician (README.md
 * here, "Removing a series"). Its structures, label map, annotations, key images and the plans drafted on it
 * go with it (the rows by the foreign keys' cascade, in one transaction; the files after the
 * commit, so that a failed removal never leaves rows pointing at missing files). A series an
 * assessment ran on stays: 409 naming the plans.
 */
export class SeriesRemoval {
  constructor(
    private readonly em: EntityManager,
    private readonly stores: SeriesRemovalStores,
  ) {}

  async preview(user: SignedInUser, actor: Actor, seriesId: string): Promise<SeriesRemovalView> {
    const series = await this.findSeriesToRemove(user, seriesId);
    const view = await this.describe(series);
    await writeAudit(this.em, actor, {
      action: 'series.removal-read',
      entityType: 'series',
      entityId: series.id,
      detail: { caseId: series.clinicalCase.id, isBlocked: view.blockedBy.length > 0 },
    });
    return view;
  }

  async remove(user: SignedInUser, actor: Actor, seriesId: string): Promise<void> {
    const series = await this.findSeriesToRemove(user, seriesId);
    const view = await this.describe(series);
    if (view.blockedBy.length) {
      throw new ConflictError(
        `The series cannot be removed: assessments ran on it (${blockingText(view)}). ` +
          'Their results rest on it.',
      );
    }
    const labelMap = await this.em.findOne(LabelMap, { series: series.id });
    const keyImages = await this.em.find(KeyImage, { series: series.id });
    const fileKeys = {
      volume: series.storageKey,
      labelMap: labelMap?.storageKey ?? null,
      // Key images live in the imaging store's root, under key-images/.
      keyImages: keyImages.map((keyImage) => keyImage.storageKey),
    };
    await this.em.transactional(async (em) => {
      // The rows that hang on the series go by the foreign keys' cascade (structures, label
      // map, annotations, plans without assessments); the series row is the one delete.
      await em.nativeDelete(ImageSeries, { id: series.id });
      recordAudit(em, actor, {
        action: 'series.delete',
        entityType: 'series',
        entityId: series.id,
        detail: {
          caseId: series.clinicalCase.id,
          structureCount: view.structures.length,
          planIds: view.plans.map((plan) => plan.id),
          annotationCount: view.annotationCount,
          keyImageCount: view.keyImageCount,
          hadLabelMap: view.hasLabelMap,
        },
      });
    });
    this.em.clear();
    const removals = await Promise.allSettled([
      this.stores.volumes.remove(fileKeys.volume),
      ...(fileKeys.labelMap ? [this.stores.labelMaps.remove(fileKeys.labelMap)] : []),
      ...fileKeys.keyImages.map((key) => this.stores.volumes.remove(key)),
    ]);
    if (removals.some((removal) => removal.status === 'rejected')) {
      logger.warn(`removing series ${series.id} left image files behind`);
    }
  }

  private async findSeriesToRemove(user: SignedInUser, seriesId: string): Promise<ImageSeries> {
    const series = await this.em.findOne(
      ImageSeries,
      { id: seriesId, clinicalCase: visibilityFilter(user) },
      { populate: ['clinicalCase'] },
    );
    if (!series) throw new NotFoundError('The series');
    const found = series.clinicalCase.getEntity();
    if (!hasRole(user, 'presenting-physician') || found.presenter.id !== user.id) {
      throw new ForbiddenError('Only the presenting physician of this case removes its series.');
    }
    assertCaseOpenForChanges(found);
    return series;
  }

  private async describe(series: ImageSeries): Promise<SeriesRemovalView> {
    const structures = await this.em.find(
      Structure,
      { series: series.id },
      { orderBy: { labelValue: 'asc' }, populate: ['lesion'] },
    );
    const plans = await this.em.find(
      NeedlePlan,
      { series: series.id },
      { orderBy: { createdAt: 'asc', id: 'asc' } },
    );
    const assessments = plans.length
      ? await this.em.find(Assessment, { plan: { $in: plans.map((plan) => plan.id) } })
      : [];
    const assessmentCount = (planId: string) =>
      assessments.filter((assessment) => assessment.plan.id === planId).length;
    return {
      seriesId: series.id,
      seriesLabel: seriesLabel(series),
      structures: structures.map((structure) => {
        const lesion = structure.lesion?.getEntity();
        return {
          id: structure.id,
          name: structure.name,
          lesionLabel: lesion ? lesionLabel(lesion) : null,
          isLesionConfirmed: structure.isLesionConfirmed,
        };
      }),
      hasLabelMap: (await this.em.count(LabelMap, { series: series.id })) > 0,
      plans: plans.map((plan) => ({ id: plan.id, name: plan.name })),
      annotationCount: await this.em.count(Annotation, { series: series.id }),
      keyImageCount: await this.em.count(KeyImage, { series: series.id }),
      blockedBy: plans
        .filter((plan) => assessmentCount(plan.id) > 0)
        .map((plan) => ({
          planId: plan.id,
          planName: plan.name,
          assessmentCount: assessmentCount(plan.id),
        })),
    };
  }
}

function blockingText(view: SeriesRemovalView): string {
  return view.blockedBy
    .map(
      (entry) =>
        `plan ${entry.planName}: ${entry.assessmentCount} assessment${entry.assessmentCount === 1 ? '' : 's'}`,
    )
    .join('; ');
}
