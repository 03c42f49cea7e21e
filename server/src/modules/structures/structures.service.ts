import { endianness } from 'node:os';
import type { ReadStream } from 'node:fs';
import type { Request, Response } from 'express';
import type { EntityManager } from '@mikro-orm/postgresql';
import {
  encodeLabelMapFilePreamble,
  maxLabelValue,
  structureKindLabels,
  structureLabelsSchema,
  type StructureKind,
  type StructureLabels,
  type StructureView,
  type UpdateStructure,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ForbiddenError, NotFoundError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit, writeAudit } from '../audit/audit.service';
import { visibilityFilter } from '../cases/case.service';
import type { FileStore } from '../imaging/file-store';
import { ImageSeries } from '../imaging/image-series.entity';
import { User } from '../users/user.entity';
import { DicomSegReader } from './dicom-seg-reader';
import { decodeLabelMap } from './label-map-decode';
import { LabelMap } from './label-map.entity';
import { Structure } from './structure.entity';
import { StructureRefusal } from './structure-refusal';
import { receiveImport } from './structure-upload';
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

/** The `labels` field parsed; a 400 naming `labels` and what is wrong otherwise. */
export function parseLabels(text: string | undefined): StructureLabels {
  if (text === undefined || text.trim() === '') return {};
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch {
    throw new StructureRefusal(
      400,
      'labels',
      'The field "labels" is not JSON; send an object of label value → structure kind, ' +
        'e.g. {"1":"liver","2":"tumour"}.',
    );
  }
  const result = structureLabelsSchema.safeParse(parsed);
  if (result.success) return result.data;
  const issue = result.error.issues[0];
  const key = issue?.path[0];
  const detail =
    typeof key === 'string' && issue?.code === 'invalid_value'
      ? `maps ${key} to ${JSON.stringify((parsed as Record<string, unknown>)[key])}, which is ` +
        'not a structure kind (tumour, liver, portal-vein, hepatic-vein, hepatic-artery, ' +
        'bile-duct, gallbladder, bowel, stomach, lung, heart, kidney, bone, skin)'
      : typeof key === 'string'
        ? `has the key ${JSON.stringify(key)}, which is not a label value from 1 to ${maxLabelValue}`
        : 'is not an object of label value → structure kind, e.g. {"1":"liver","2":"tumour"}';
  throw new StructureRefusal(400, 'labels', `The field "labels" ${detail}.`);
}

/** The labels as little-endian bytes of the narrowest type that holds them. */
function storedVoxels(
  labels: Uint16Array,
  largest: number,
): {
  dataType: 'uint8' | 'uint16';
  bytes: Uint8Array;
} {
  if (largest <= 255) return { dataType: 'uint8', bytes: Uint8Array.from(labels) };
  if (endianness() === 'LE') {
    return {
      dataType: 'uint16',
      bytes: new Uint8Array(labels.buffer, labels.byteOffset, labels.byteLength),
    };
  }
  const bytes = new Uint8Array(labels.byteLength);
  const view = new DataView(bytes.buffer);
  labels.forEach((value, index) => view.setUint16(index * 2, value, true));
  return { dataType: 'uint16', bytes };
}

/**
 * Structures of a series, from a label map on the series' own grid (README.md here). Seen by
 * whoever sees the series' case (404 otherwise); imported and renamed by the case's presenting
 * physician only (403 for anyone else who sees it). An import is checked whole before anything
 * is written; then the label map goes to the file store (atomically) and the rows and the
 * audit event in one flush. A second import replaces the first (kinds and names of label values
 * it keeps stay, unless `labels` names them anew).
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
  ): Promise<StructureView[]> {
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
  ): Promise<StructureView[]> {
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
    return structures.map(toView);
  }

  async update(
    user: SignedInUser,
    actor: Actor,
    structureId: string,
    body: UpdateStructure,
  ): Promise<StructureView> {
    const structure = await this.em.findOne(
      Structure,
      { id: structureId, series: { clinicalCase: visibilityFilter(user) } },
      { populate: ['series.clinicalCase'] },
    );
    if (!structure) throw new NotFoundError('The structure');
    const found = structure.series.getEntity().clinicalCase.getEntity();
    if (!hasRole(user, 'presenting-physician') || found.presenter.id !== user.id) {
      throw new ForbiddenError(
        'Only the presenting physician of this case changes its structures.',
      );
    }
    const changed: string[] = [];
    if (body.kind !== structure.kind) changed.push('kind');
    structure.kind = body.kind;
    if (body.name !== undefined && body.name !== structure.name) {
      changed.push('name');
      structure.name = body.name;
    }
    recordAudit(this.em, actor, {
      action: 'structure.update',
      entityType: 'structure',
      entityId: structure.id,
      detail: { seriesId: structure.series.id, changed, kind: structure.kind },
    });
    await this.em.flush();
    return toView(structure);
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
  ): Promise<StructureView[]> {
    const labels = parseLabels(labelsText);
    const { store, settings } = this.dependencies;
    const labelMap = await decodeLabelMap(
      file,
      series,
      this.dependencies.segmentationReader ?? new DicomSegReader(settings.segmentationRead),
    );
    const { source, segments } = labelMap;

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
    const previous = new Map(
      (await this.structuresOf(series.id)).map((row) => [row.labelValue, row]),
    );
    for (const [labelValue, row] of previous) {
      if (!counts.has(labelValue)) this.em.remove(row);
    }
    for (const labelValue of labelValues) {
      const voxelCount = counts.get(labelValue) ?? 0;
      const volumeMl = volumeMlOf(voxelCount, series);
      const namedKind = labels[String(labelValue)];
      const row = previous.get(labelValue);
      // A SEG names its segments itself: `labels`, else the kind its description suggests,
      // else the kind the row had; the name is always the segment's label.
      const segment = segments?.get(labelValue);
      if (row) {
        Object.assign(row, { voxelCount, volumeMl, source });
        if (segment) {
          row.kind = namedKind ?? segment.suggestedKind ?? row.kind;
          row.name = segment.name ?? defaultName(labelValue, row.kind);
        } else if (namedKind) {
          row.kind = namedKind;
          row.name = defaultName(labelValue, namedKind);
        }
      } else {
        const kind = namedKind ?? segment?.suggestedKind ?? null;
        this.em.persist(
          new Structure({
            series: seriesRef,
            labelValue,
            kind,
            name: segment?.name ?? defaultName(labelValue, kind),
            voxelCount,
            volumeMl,
            source,
          }),
        );
      }
    }
    recordAudit(this.em, actor, {
      action: 'structures.import',
      entityType: 'series',
      entityId: series.id,
      detail: {
        caseId: series.clinicalCase.id,
        source,
        structureCount: labelValues.length,
        isReplacement: previousMap !== null,
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
    return (await this.structuresOf(series.id)).map(toView);
  }

  private async structuresOf(seriesId: string): Promise<Structure[]> {
    return this.em.find(Structure, { series: seriesId }, { orderBy: { labelValue: 'asc' } });
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
    return series;
  }
}

function toView(structure: Structure): StructureView {
  return {
    id: structure.id,
    seriesId: structure.series.id,
    labelValue: structure.labelValue,
    kind: structure.kind,
    name: structure.name,
    voxelCount: structure.voxelCount,
    volumeMl: structure.volumeMl,
    source: structure.source,
  };
}
