import { endianness } from 'node:os';
import type { ReadStream } from 'node:fs';
import type { Request, Response } from 'express';
import type { EntityManager } from '@mikro-orm/postgresql';
import { UniqueConstraintViolationException } from '@mikro-orm/core';
import {
  deidentificationMethodCodes,
  encodeVolumeFilePreamble,
  type DeidentificationRecord,
  type ImageSeriesView,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ForbiddenError, NotFoundError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit, writeAudit } from '../audit/audit.service';
import { ClinicalCase } from '../cases/case.entity';
import { assertCaseOpenForChanges } from '../cases/case-open-for-changes';
import { visibilityFilter } from '../cases/case-visibility';
import { User } from '../users/user.entity';
import { CaseDeidentificationKeys } from './case-deidentification-keys';
import { deidentificationMethod, deidentifyHeader, uidsToReplace } from './deidentify';
import type { DicomReadPool } from './dicom-read-pool';
import { firstString } from './dicom-json';
import type { FileStore } from './file-store';
import { ImageSeries } from './image-series.entity';
import { ImagingRefusal } from './imaging-refusal';
import type { ImagingSettings } from './imaging-settings';
import { assembleSeries, type AssembledSeries } from './series-assembly';
import { resolveUidReplacements } from './uid-replacements';
import { receiveUpload } from './upload-receiver';

export interface ImagingDependencies {
  pool: DicomReadPool;
  store: FileStore;
  settings: ImagingSettings;
}

const deidentificationRecord = (): DeidentificationRecord => ({
  patientIdentityRemoved: true,
  profile: 'DICOM PS3.15 Annex E Basic Application Level Confidentiality Profile',
  methodCodes: deidentificationMethodCodes.map((entry) => ({ ...entry })),
  method: [...deidentificationMethod],
  dateOption: 'shifted-per-case',
});

/** The voxels as little-endian bytes (a view on little-endian machines, a copy elsewhere). */
function littleEndianBytes(voxels: Int16Array): Uint8Array {
  if (endianness() === 'LE') {
    return new Uint8Array(voxels.buffer, voxels.byteOffset, voxels.byteLength);
  }
  const bytes = new Uint8Array(voxels.byteLength);
  const view = new DataView(bytes.buffer);
  voxels.forEach((value, index) => view.setInt16(index * 2, value, true));
  return bytes;
}

/**
 * Image series of a case (README.md here). Seen by whoever sees the case (a case out of reach
 * answers 404); uploaded by the case's presenting physician only (403 for anyone else who sees
 * it). An upload is read in a worker, checked, de-identified in memory, and only then written:
 * the volume to the file store (atomically), then the series row and its audit event.
 */
export class ImagingService {
  constructor(
    private readonly em: EntityManager,
    private readonly dependencies: ImagingDependencies,
  ) {}

  async upload(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    request: Request,
    response: Response,
  ): Promise<ImageSeriesView> {
    const found = await this.findVisibleCase(user, caseId);
    if (!hasRole(user, 'presenting-physician') || found.presenter.id !== user.id) {
      throw new ForbiddenError('Only the presenting physician of this case uploads its images.');
    }
    assertCaseOpenForChanges(found);
    try {
      return await this.ingest(user, actor, found, request, response);
    } catch (error) {
      const reason =
        error instanceof ImagingRefusal
          ? error.reason
          : error instanceof UniqueConstraintViolationException
            ? 'duplicate-series'
            : null;
      if (reason) {
        await writeAudit(this.em, actor, {
          action: 'series.upload',
          entityType: 'case',
          entityId: found.id,
          outcome: 'refused',
          detail: { reason },
        });
      }
      throw error;
    }
  }

  async list(user: SignedInUser, actor: Actor, caseId: string): Promise<ImageSeriesView[]> {
    const found = await this.findVisibleCase(user, caseId);
    const series = await this.em.find(
      ImageSeries,
      { clinicalCase: found.id },
      { orderBy: { createdAt: 'asc', id: 'asc' }, populate: ['uploadedBy'] },
    );
    await writeAudit(this.em, actor, {
      action: 'series.list',
      entityType: 'case',
      entityId: found.id,
      detail: { seriesCount: series.length },
    });
    return series.map((entry) => toView(entry, entry.uploadedBy.getEntity().displayName));
  }

  async get(user: SignedInUser, actor: Actor, seriesId: string): Promise<ImageSeriesView> {
    const series = await this.findVisibleSeries(user, seriesId, true);
    await writeAudit(this.em, actor, {
      action: 'series.read',
      entityType: 'series',
      entityId: series.id,
      detail: { caseId: series.clinicalCase.id },
    });
    return toView(series, series.uploadedBy.getEntity().displayName);
  }

  /** The stored volume body of a series the user may see, opened for streaming. */
  async openVolume(
    user: SignedInUser,
    actor: Actor,
    seriesId: string,
  ): Promise<{ stream: ReadStream; byteLength: number }> {
    const series = await this.findVisibleSeries(user, seriesId, false);
    const opened = await this.dependencies.store.openRead(series.storageKey);
    try {
      await writeAudit(this.em, actor, {
        action: 'series.volume-read',
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

  private async findVisibleSeries(
    user: SignedInUser,
    seriesId: string,
    withUploader: boolean,
  ): Promise<ImageSeries> {
    const series = await this.em.findOne(
      ImageSeries,
      { id: seriesId, clinicalCase: visibilityFilter(user) },
      { populate: withUploader ? ['uploadedBy'] : [] },
    );
    if (!series) throw new NotFoundError('The series');
    return series;
  }

  private findVisibleCase(user: SignedInUser, id: string): Promise<ClinicalCase> {
    return this.em.getRepository(ClinicalCase).findVisibleOrFail(user, id);
  }

  private async ingest(
    user: SignedInUser,
    actor: Actor,
    found: ClinicalCase,
    request: Request,
    response: Response,
  ): Promise<ImageSeriesView> {
    const { settings, pool, store } = this.dependencies;
    const files = await receiveUpload(request, response, settings.upload);
    const { instances, skippedCount } = await pool.read(files);
    const assembled = assembleSeries(instances);
    const header = await this.deidentifiedHeader(found.id, assembled);
    const uid = (tag: string, name: string) => {
      const value = firstString(header.dataset, tag);
      if (!value) throw new ImagingRefusal(400, 'malformed', `The slices lack a ${name}.`);
      return value;
    };
    const seriesUid = uid('0020000E', 'Series Instance UID (0020,000E)');
    const studyUid = uid('0020000D', 'Study Instance UID (0020,000D)');
    const frameOfReferenceUid = uid('00200052', 'Frame of Reference UID (0020,0052)');
    const stored = await this.em.findOne(ImageSeries, { clinicalCase: found.id, seriesUid });
    if (stored) {
      throw new ImagingRefusal(
        409,
        'duplicate-series',
        `This series is stored for the case already (series ${stored.id}).`,
      );
    }

    const { geometry } = assembled;
    const storageKey = store.newVolumeKey();
    const preamble = encodeVolumeFilePreamble({
      format: 'emberline-volume',
      version: 1,
      dataType: 'int16',
      byteOrder: 'little-endian',
      dimensions: geometry.dimensions,
      spacingMm: geometry.spacingMm,
      originLps: geometry.originLps,
      direction: geometry.direction,
      modality: assembled.modality,
      valueUnit: assembled.valueUnit,
      valueRange: assembled.valueRange,
      window: assembled.window,
    });
    const byteLength = await store.writeAtomically(storageKey, [
      preamble,
      littleEndianBytes(assembled.voxels),
    ]);
    const series = new ImageSeries({
      clinicalCase: this.em.getReference(ClinicalCase, found.id, { wrapped: true }),
      uploadedBy: this.em.getReference(User, user.id, { wrapped: true }),
      modality: assembled.modality,
      dimensions: geometry.dimensions,
      spacingMm: geometry.spacingMm,
      originLps: geometry.originLps,
      direction: geometry.direction,
      valueUnit: assembled.valueUnit,
      rescaleApplied: assembled.rescaleApplied,
      valueMin: assembled.valueRange.min,
      valueMax: assembled.valueRange.max,
      windowCentre: assembled.window.centre,
      windowWidth: assembled.window.width,
      seriesUid,
      studyUid,
      frameOfReferenceUid,
      storageKey,
      byteLength,
      dicomHeader: header,
      deidentification: deidentificationRecord(),
    });
    series.seriesNumber = assembled.seriesNumber;
    this.em.persist(series);
    recordAudit(this.em, actor, {
      action: 'series.upload',
      entityType: 'case',
      entityId: found.id,
      detail: { seriesId: series.id, sliceCount: series.sliceCount, skippedCount },
    });
    try {
      await this.em.flush();
    } catch (error) {
      // Nothing of a failed upload stays behind: not the row, not the volume.
      this.em.clear();
      await store.remove(storageKey);
      throw error;
    }
    return toView(series, user.displayName);
  }

  private async deidentifiedHeader(caseId: string, assembled: AssembledSeries) {
    const keys = new CaseDeidentificationKeys(
      this.dependencies.settings.deidentificationSecret,
      caseId,
    );
    const originals = uidsToReplace(assembled.firstSliceHeader);
    const replacements = await resolveUidReplacements(this.em, caseId, keys, originals);
    return deidentifyHeader(assembled.firstSliceHeader, {
      replaceUid: (original) => {
        const replacement = replacements.get(original);
        if (!replacement) throw new Error('a UID was not given a replacement');
        return replacement;
      },
      dateShiftDays: keys.dateShiftDays,
    });
  }
}

function toView(series: ImageSeries, uploaderName: string): ImageSeriesView {
  const [rowLps, columnLps, sliceNormalLps] = series.direction;
  return {
    id: series.id,
    caseId: series.clinicalCase.id,
    modality: series.modality,
    dimensions: series.dimensions,
    spacingMm: series.spacingMm,
    originLps: series.originLps,
    orientation: { rowLps, columnLps, sliceNormalLps },
    sliceCount: series.sliceCount,
    valueUnit: series.valueUnit,
    valueRange: { min: series.valueMin, max: series.valueMax },
    window: { centre: series.windowCentre, width: series.windowWidth },
    seriesNumber: series.seriesNumber,
    byteLength: series.byteLength,
    volumeUrl: `/api/series/${series.id}/volume`,
    deidentification: series.deidentification,
    uploadedBy: { id: series.uploadedBy.id, displayName: uploaderName },
    createdAt: series.createdAt.toISOString(),
  };
}
