import type { ReadStream } from 'node:fs';
import type { Request, Response } from 'express';
import type { EntityManager } from '@mikro-orm/postgresql';
import {
  encodeLabelMapFilePreamble,
  structureKindLabels,
  type StructureImportResult,
  type StructureKind,
  type StructureView,
  type UpdateStructure,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, NotFoundError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit, writeAudit } from '../audit/audit.service';
import { assertCaseOpenForChanges } from '../cases/case-open-for-changes';
import { visibilityFilter } from '../cases/case-visibility';
import { Lesion } from '../cases/lesion.entity';
import type { FileStore } from '../imaging/file-store';
import { ImageSeries } from '../imaging/image-series.entity';
import { User } from '../users/user.entity';
import { DicomSegReader } from './dicom-seg-reader';
import { decodeLabelMap, seriesGeometry } from './label-map-decode';
import { LabelMap } from './label-map.entity';
import { parseLabels } from './labels-field';
import {
  applyLesionSuggestions,
  loadSuggestionTargets,
  refreshLesionSuggestions,
  type SuggestionChange,
} from './lesion-link-suggestions';
import { kindOfSegment } from './segment-overlap';
import { changeLesionLink } from './structure-lesion-link';
import { Structure } from './structure.entity';
import { StructureRefusal } from './structure-refusal';
import { storedVoxels } from './stored-label-voxels';
import { receiveImport } from './structure-upload';
import { toStructureView } from './structure-view';
import type { StructuresSettings } from './structures-settings';

export interface StructuresDependencies {
  /** The label map store: a FileStore of its own folder. */
  store: FileStore;
  settings: StructuresSettings;
  /**
   * Reads DICOM SEG files, at most `maxConcurrent` at once across requests; without one (the
   * demo seeder, which imports NIfTI) the service makes its own from the settings.
   */
  segmentationReader?: DicomSegReader;
}

/** mL of `voxelCount` voxels of the series: count × Δi·Δj·Δk (mm³) / 1000, to six decimals. */
function volumeMlOf(voxelCount: number, series: ImageSeries): number {
  const [spacingI, spacingJ, spacingK] = series.spacingMm;
  return Number(((voxelCount * spacingI * spacingJ * spacingK) / 1000).toFixed(6));
}

const defaultName = (labelValue: number, kind: StructureKind | null) =>
  kind ? `${structureKindLabels[kind]} (label ${labelValue})` : `Label ${labelValue}`;

/**
 * Structures of a series, from a label map on the series' own grid (README.md here). Seen by
 * whoever sees the series' case (404 otherwise); imported and renamed by the case's presenting
 * physician only (403 for anyone else who sees it). An import is checked whole before anything
 * is written; then the label map goes to the file store (atomically) and the rows and the
 * audit event in one flush. A second import replaces the first (kinds and names of label values
 * it keeps stay, unless `labels` names them anew). Tumours get a suggested lesion of the case on
 * import; the presenter confirms or changes it (`structure-lesion-link.ts`).
 */
export class StructuresService {
  constructor(
    private readonly em: EntityManager,
    private readonly dependencies: StructuresDependencies,
  ) {}

  /** POST /series/:id/structures: access first, then the multipart body. */
  async importFromRequest(
    user: SignedInUser,
    actor: Actor,
    seriesId: string,
    request: Request,
    response: Response,
  ): Promise<StructureImportResult> {
    const series = await this.findSeriesToChange(user, seriesId);
    return this.audited(actor, series, async () => {
      const received = await receiveImport(
        request,
        response,
        this.dependencies.settings.maxUploadBytes,
      );
      return this.ingest(user, actor, series, received.file, received.labelsText);
    });
  }

  /** The same import from bytes in hand (the demo seeder). */
  async importFile(
    user: SignedInUser,
    actor: Actor,
    seriesId: string,
    file: Uint8Array,
    labelsText: string | undefined,
  ): Promise<StructureImportResult> {
    const series = await this.findSeriesToChange(user, seriesId);
    return this.audited(actor, series, () => this.ingest(user, actor, series, file, labelsText));
  }

  async list(user: SignedInUser, actor: Actor, seriesId: string): Promise<StructureView[]> {
    const series = await this.findVisibleSeries(user, seriesId);
    const structures = await this.structuresOf(series.id);
    await writeAudit(this.em, actor, {
      action: 'structures.list',
      entityType: 'series',
      entityId: series.id,
      detail: { caseId: series.clinicalCase.id, structureCount: structures.length },
    });
    return structures.map(toStructureView);
  }

  /**
   * PATCH /structures/:id: kind, name and lesion link (see `updateStructureSchema`). A change of
   * the link, or of a structure to or from a tumour, refreshes the series' other suggestions in
   * the same flush.
   */
  async update(
    user: SignedInUser,
    actor: Actor,
    structureId: string,
    body: UpdateStructure,
  ): Promise<StructureView> {
    const structure = await this.em.findOne(
      Structure,
      { id: structureId, series: { clinicalCase: visibilityFilter(user) } },
      { populate: ['series.clinicalCase', 'lesion'] },
    );
    if (!structure) throw new NotFoundError('The structure');
    const series = structure.series.getEntity();
    const found = series.clinicalCase.getEntity();
    if (!hasRole(user, 'presenting-physician') || found.presenter.id !== user.id) {
      throw new ForbiddenError(
        'Only the presenting physician of this case changes its structures.',
      );
    }
    assertCaseOpenForChanges(found);
    if (body.name !== undefined && body.name !== structure.name) {
      // Names tell the series' structures apart: one name per series, whatever its case.
      const sameName = await this.em.count(Structure, {
        series: series.id,
        id: { $ne: structure.id },
        name: { $ilike: body.name.replace(/[\\%_]/g, (c) => `\\${c}`) },
      });
      if (sameName > 0) {
        throw new ConflictError(`Another structure of this series is named "${body.name}".`);
      }
    }
    const wasTumour = structure.kind === 'tumour';
    const isTumourAfter = body.kind === undefined ? wasTumour : body.kind === 'tumour';
    const touchesLinks = body.isLesionConfirmed !== undefined || wasTumour !== isTumourAfter;
    // Loaded before anything changes: a query of a changed entity type would flush it early.
    const targets = touchesLinks
      ? await loadSuggestionTargets(this.em, { seriesId: series.id })
      : [];
    const lesions = touchesLinks
      ? await this.em.find(Lesion, { clinicalCase: found.id }, { orderBy: { createdAt: 'asc' } })
      : [];

    const changed: string[] = [];
    if (body.kind !== undefined && body.kind !== structure.kind) {
      changed.push('kind');
      structure.kind = body.kind;
    }
    if (body.name !== undefined && body.name !== structure.name) {
      changed.push('name');
      structure.name = body.name;
    }
    const siblings = targets.find((target) => target.series.id === series.id)?.structures ?? [];
    const link = changeLesionLink(structure, siblings, lesions, body);
    let suggestions: SuggestionChange[] = [];
    if (link.needsSuggestion || wasTumour !== isTumourAfter) {
      suggestions = await refreshLesionSuggestions(this.dependencies.store, targets, lesions);
    }
    if (link.isChanged) {
      recordAudit(this.em, actor, {
        action: 'structure.lesion-link',
        entityType: 'structure',
        entityId: structure.id,
        detail: {
          seriesId: series.id,
          caseId: found.id,
          lesionId: structure.lesion?.id ?? null,
          isLesionConfirmed: structure.isLesionConfirmed,
          suggestionsChanged: suggestions.length,
        },
      });
    }
    if (changed.length > 0 || !link.isChanged) {
      recordAudit(this.em, actor, {
        action: 'structure.update',
        entityType: 'structure',
        entityId: structure.id,
        detail: {
          seriesId: series.id,
          changed,
          kind: structure.kind,
          suggestionsChanged: link.isChanged ? 0 : suggestions.length,
        },
      });
    }
    await this.em.flush();
    return toStructureView(structure);
  }

  /** The stored label map body of a series the user may see, opened for streaming. */
  async openLabelMap(
    user: SignedInUser,
    actor: Actor,
    seriesId: string,
  ): Promise<{ stream: ReadStream; byteLength: number }> {
    const series = await this.findVisibleSeries(user, seriesId);
    const labelMap = await this.em.findOne(LabelMap, { series: series.id });
    if (!labelMap) throw new NotFoundError('The label map of this series');
    const opened = await this.dependencies.store.openRead(labelMap.storageKey);
    try {
      await writeAudit(this.em, actor, {
        action: 'structures.label-map-read',
        entityType: 'series',
        entityId: series.id,
        detail: { caseId: series.clinicalCase.id, byteLength: opened.byteLength },
      });
    } catch (error) {
      opened.stream.destroy();
      throw error;
    }
    return opened;
  }

  /** Runs an import; a refusal is audited (with its reason only) and rethrown. */
  private async audited<T>(actor: Actor, series: ImageSeries, run: () => Promise<T>): Promise<T> {
    try {
      return await run();
    } catch (error) {
      if (error instanceof StructureRefusal) {
        await writeAudit(this.em, actor, {
          action: 'structures.import',
          entityType: 'series',
          entityId: series.id,
          outcome: 'refused',
          detail: { caseId: series.clinicalCase.id, reason: error.reason },
        });
      }
      throw error;
    }
  }

  private async ingest(
    user: SignedInUser,
    actor: Actor,
    series: ImageSeries,
    file: Uint8Array,
    labelsText: string | undefined,
  ): Promise<StructureImportResult> {
    const labels = parseLabels(labelsText);
    const { store, settings } = this.dependencies;
    // Read before anything changes (a query of a changed entity type would flush it early);
    // their kinds also decide which of two overlapping SEG segments keeps a voxel.
    const previousRows = await this.structuresOf(series.id);
    const lesions = await this.em.find(
      Lesion,
      { clinicalCase: series.clinicalCase.id },
      { orderBy: { createdAt: 'asc' } },
    );
    const kindHints = {
      named: labels,
      previous: Object.fromEntries(previousRows.map((row) => [String(row.labelValue), row.kind])),
    };
    const labelMap = await decodeLabelMap(
      file,
      series,
      this.dependencies.segmentationReader ?? new DicomSegReader(settings.segmentationRead),
      kindHints,
    );
    const { source, segments, overlaps } = labelMap;

    const counts = new Map<number, number>();
    let largest = 0;
    for (const value of labelMap.labels) {
      if (value === 0) continue;
      counts.set(value, (counts.get(value) ?? 0) + 1);
      if (value > largest) largest = value;
    }
    if (counts.size === 0) {
      throw new StructureRefusal(400, 'empty', 'The label map holds no label: every voxel is 0.');
    }
    const absent = Object.keys(labels)
      .map(Number)
      .filter((value) => !counts.has(value));
    if (absent.length > 0) {
      throw new StructureRefusal(
        400,
        'labels',
        `The field "labels" names the label value${absent.length > 1 ? 's' : ''} ` +
          `${absent.join(', ')}, which the label map does not hold.`,
      );
    }
    const labelValues = [...counts.keys()].sort((a, b) => a - b);

    const voxels = storedVoxels(labelMap.labels, largest);
    const storageKey = store.newVolumeKey();
    const byteLength = await store.writeAtomically(storageKey, [
      encodeLabelMapFilePreamble({
        format: 'emberline-label-map',
        version: 1,
        dataType: voxels.dataType,
        byteOrder: 'little-endian',
        dimensions: series.dimensions,
        spacingMm: series.spacingMm,
        originLps: series.originLps,
        direction: series.direction,
        labelValues,
      }),
      voxels.bytes,
    ]);

    const seriesRef = this.em.getReference(ImageSeries, series.id, { wrapped: true });
    const previousMap = await this.em.findOne(LabelMap, { series: series.id });
    const previousKey = previousMap?.storageKey ?? null;
    const fields = {
      source,
      dataType: voxels.dataType,
      storageKey,
      byteLength,
      importedBy: this.em.getReference(User, user.id, { wrapped: true }),
    };
    if (previousMap) Object.assign(previousMap, fields);
    else this.em.persist(new LabelMap({ series: seriesRef, ...fields }));

    // Rows of kept label values are updated in place (ids stay); the rest go or come.
    const previous = new Map(previousRows.map((row) => [row.labelValue, row]));
    for (const [labelValue, row] of previous) {
      if (!counts.has(labelValue)) this.em.remove(row);
    }
    const rows: Structure[] = [];
    for (const labelValue of labelValues) {
      const voxelCount = counts.get(labelValue) ?? 0;
      const volumeMl = volumeMlOf(voxelCount, series);
      const namedKind = labels[String(labelValue)];
      const row = previous.get(labelValue);
      // A SEG names its segments itself: `labels`, else the kind its description suggests,
      // else the kind the row had; the name is always the segment's label.
      const segment = segments?.get(labelValue);
      if (row) {
        rows.push(row);
        Object.assign(row, { voxelCount, volumeMl, source });
        if (segment) {
          row.kind = kindOfSegment(labelValue, segment.suggestedKind, kindHints);
          row.name = segment.name ?? defaultName(labelValue, row.kind);
        } else if (namedKind) {
          row.kind = namedKind;
          row.name = defaultName(labelValue, namedKind);
        }
      } else {
        const kind = namedKind ?? segment?.suggestedKind ?? null;
        const created = new Structure({
          series: seriesRef,
          labelValue,
          kind,
          name: segment?.name ?? defaultName(labelValue, kind),
          voxelCount,
          volumeMl,
          source,
        });
        rows.push(created);
        this.em.persist(created);
      }
    }
    // Confirmed links of kept label values stay (as their kinds and names do); every other
    // tumour gets the suggestion measured on the new voxels.
    applyLesionSuggestions(rows, lesions, labelMap.labels, seriesGeometry(series));
    recordAudit(this.em, actor, {
      action: 'structures.import',
      entityType: 'series',
      entityId: series.id,
      detail: {
        caseId: series.clinicalCase.id,
        source,
        structureCount: labelValues.length,
        isReplacement: previousMap !== null,
        suggestedLinks: rows.filter((row) => row.lesion && !row.isLesionConfirmed).length,
        overlapCount: overlaps.length,
      },
    });
    try {
      await this.em.flush();
    } catch (error) {
      // Nothing of a failed import stays behind; the earlier label map is untouched.
      this.em.clear();
      await store.remove(storageKey);
      throw error;
    }
    if (previousKey) await store.remove(previousKey);
    return { structures: (await this.structuresOf(series.id)).map(toStructureView), overlaps };
  }

  private async structuresOf(seriesId: string): Promise<Structure[]> {
    return this.em.find(
      Structure,
      { series: seriesId },
      { orderBy: { labelValue: 'asc' }, populate: ['lesion'] },
    );
  }

  private async findVisibleSeries(user: SignedInUser, seriesId: string): Promise<ImageSeries> {
    const series = await this.em.findOne(
      ImageSeries,
      { id: seriesId, clinicalCase: visibilityFilter(user) },
      { populate: ['clinicalCase'] },
    );
    if (!series) throw new NotFoundError('The series');
    return series;
  }

  private async findSeriesToChange(user: SignedInUser, seriesId: string): Promise<ImageSeries> {
    const series = await this.findVisibleSeries(user, seriesId);
    const found = series.clinicalCase.getEntity();
    if (!hasRole(user, 'presenting-physician') || found.presenter.id !== user.id) {
      throw new ForbiddenError(
        'Only the presenting physician of this case imports its structures.',
      );
    }
    assertCaseOpenForChanges(found);
    return series;
  }
}
