import { endianness } from 'node:os';
import type { ReadStream } from 'node:fs';
import type { Request, Response } from 'express';
import type { EntityManager } from '@mikro-orm/postgresql';
import { UniqueConstraintViolationException } from '@mikro-orm/core';
import {
  deidentificationMethodCodes,
  encodeVolumeFilePreamble,
  voxelCount,
  type DeidentificationRecord,
  type ImageSeriesView,
  type UploadListing,
  type UploadProgress,
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
import type { ScannedEntry } from './dicom-read-protocol';
import { firstString } from './dicom-json';
import type { FileStore } from './file-store';
import { ImageSeries } from './image-series.entity';
import { ImagingRefusal } from './imaging-refusal';
import type { ImagingSettings } from './imaging-settings';
import type { PendingUploads, UploadProgressBoard } from './pending-uploads';
import { assembleSeries, type AssembledSeries, type SeriesPlan } from './series-assembly';
import { listCandidate, sortStudy } from './study-sorting';
import { UidReplacement } from './uid-replacement.entity';
import { resolveUidReplacements } from './uid-replacements';
import { receiveUpload } from './upload-receiver';

export interface ImagingDependencies {
  pool: DicomReadPool;
  store: FileStore;
  settings: ImagingSettings;
  pending: PendingUploads;
  progress: UploadProgressBoard;
}

/** What an upload answers: the stored series (one image series), or the listing to choose from. */
export type UploadOutcome =
  { status: 201; series: ImageSeriesView } | { status: 202; listing: UploadListing };

/** A series chosen to store: its plan and the files its images come from. */
interface SeriesToStore {
  key: string;
  plan: SeriesPlan;
  files: { label: string; bytes: Uint8Array }[];
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
    progressToken: string | undefined,
  ): Promise<UploadOutcome> {
    const found = await this.findCaseToUploadTo(user, caseId);
    try {
      return await this.receive(user, actor, found, request, response, progressToken);
    } catch (error) {
      await this.auditRefusal(actor, found.id, error);
      this.failProgress(progressToken, user.id);
      throw error;
    }
  }

  /** Stores the chosen series of an upload that held several; the others are dropped. */
  async keep(
    user: SignedInUser,
    actor: Actor,
    uploadId: string,
    keys: string[],
    progressToken: string | undefined,
  ): Promise<ImageSeriesView[]> {
    const pending = this.dependencies.pending.find(uploadId, user.id);
    if (!pending) {
      const minutes = Math.round(this.dependencies.settings.pending.ttlMs / 60_000);
      throw new NotFoundError(`The upload (uploads wait ${minutes} minutes for a choice)`);
    }
    const found = await this.findCaseToUploadTo(user, pending.caseId);
    const chosen = [...new Set(keys)].map((key) => {
      const candidate = pending.candidates.find((entry) => entry.key === key);
      if (!candidate) {
        throw new ImagingRefusal(
          400,
          'no-files',
          `The upload has no series "${key.replace(/[^\w-]/g, '').slice(0, 16)}"; it offers ` +
            `${pending.candidates.map((entry) => entry.key).join(', ')}.`,
        );
      }
      return {
        key,
        plan: candidate.plan,
        files: candidate.entryIndices.map((index) => pending.files[index]),
      };
    });
    try {
      const stored = await this.storeSeries(user, actor, found, chosen, {
        keepBytes: true,
        progressToken,
        uploadId,
        skippedCount: pending.skipped.length,
      });
      // Nothing of the series not kept stays: the whole upload is forgotten.
      this.dependencies.pending.remove(uploadId);
      return stored;
    } catch (error) {
      await this.auditRefusal(actor, found.id, error);
      this.failProgress(progressToken, user.id);
      throw error;
    }
  }

  /** Forgets an upload waiting for a choice, keeping nothing of it. */
  async discard(user: SignedInUser, actor: Actor, uploadId: string): Promise<void> {
    const pending = this.dependencies.pending.find(uploadId, user.id);
    if (!pending) throw new NotFoundError('The upload');
    this.dependencies.pending.remove(uploadId);
    await writeAudit(this.em, actor, {
      action: 'series.upload-discarded',
      entityType: 'case',
      entityId: pending.caseId,
      detail: { uploadId, seriesOffered: pending.candidates.length },
    });
  }

  progressOf(user: SignedInUser, token: string): UploadProgress {
    const progress = this.dependencies.progress.get(token, user.id);
    if (!progress) throw new NotFoundError('The upload progress');
    return progress;
  }

  private async findCaseToUploadTo(user: SignedInUser, caseId: string): Promise<ClinicalCase> {
    const found = await this.findVisibleCase(user, caseId);
    if (!hasRole(user, 'presenting-physician') || found.presenter.id !== user.id) {
      throw new ForbiddenError('Only the presenting physician of this case uploads its images.');
    }
    assertCaseOpenForChanges(found);
    return found;
  }

  private async auditRefusal(actor: Actor, caseId: string, error: unknown): Promise<void> {
    const reason =
      error instanceof ImagingRefusal
        ? error.reason
        : error instanceof UniqueConstraintViolationException
          ? 'duplicate-series'
          : null;
    if (!reason) return;
    await writeAudit(this.em, actor, {
      action: 'series.upload',
      entityType: 'case',
      entityId: caseId,
      outcome: 'refused',
      detail: { reason },
    });
  }

  private failProgress(token: string | undefined, userId: string): void {
    this.dependencies.progress.update(token, userId, (progress) => {
      progress.stage = 'failed';
    });
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

  private async receive(
    user: SignedInUser,
    actor: Actor,
    found: ClinicalCase,
    request: Request,
    response: Response,
    progressToken: string | undefined,
  ): Promise<UploadOutcome> {
    const { settings, pool, pending, progress } = this.dependencies;
    const files = await receiveUpload(request, response, settings.upload);
    progress.set(progressToken, user.id, {
      stage: 'reading',
      files: { done: 0, total: files.length },
      series: [],
    });
    const scan = await pool.scan(files, ({ fileIndex, fileCount }) =>
      progress.update(progressToken, user.id, (state) => {
        state.files.done = fileIndex;
        if (fileCount !== undefined) state.files.total = fileCount;
      }),
    );
    progress.update(progressToken, user.id, (state) => {
      state.files = { done: scan.entries.length, total: scan.entries.length };
    });
    const sorted = sortStudy(scan.entries);
    const skipped = [...scan.skipped, ...sorted.skipped];
    if (sorted.candidates.length === 0) throw ImagingRefusal.from(sorted.refusalIfEmpty);
    const filesOf = (entryIndices: number[]) =>
      entryIndices.map((index) => fileOf(scan.entries[index]));
    if (sorted.candidates.length === 1 && !sorted.hasSkippedImageSeries) {
      const [only] = sorted.candidates;
      const [series] = await this.storeSeries(
        user,
        actor,
        found,
        [{ key: only.key, plan: only.plan, files: filesOf(only.entryIndices) }],
        {
          keepBytes: false,
          progressToken,
          uploadId: null,
          skippedCount: scan.skippedCount + sorted.skipped.length,
          assertStillWanted: () => assertStillWanted(request, response),
        },
      );
      return { status: 201, series };
    }
    assertStillWanted(request, response);
    // Only the candidates' files wait for the choice; reports and localizers are let go now.
    const heldEntries = sorted.candidates.flatMap((candidate) => candidate.entryIndices);
    const heldIndex = new Map(heldEntries.map((entryIndex, index) => [entryIndex, index]));
    const held = pending.add({
      caseId: found.id,
      userId: user.id,
      files: heldEntries.map((index) => fileOf(scan.entries[index])),
      candidates: sorted.candidates.map((candidate) => ({
        ...candidate,
        entryIndices: candidate.entryIndices.map((index) => heldIndex.get(index) ?? -1),
      })),
      skipped,
    });
    progress.update(progressToken, user.id, (state) => {
      state.stage = 'done';
    });
    await writeAudit(this.em, actor, {
      action: 'series.upload-listed',
      entityType: 'case',
      entityId: found.id,
      detail: {
        uploadId: held.id,
        seriesOffered: held.candidates.length,
        skippedCount: skipped.length,
      },
    });
    return {
      status: 202,
      listing: {
        uploadId: held.id,
        expiresAt: held.expiresAt.toISOString(),
        series: held.candidates.map(listCandidate),
        skipped,
      },
    };
  }

  /**
   * Decodes, checks, de-identifies and stores series, all or none: every volume is written,
   * then every row in one flush; a failure removes the volumes written.
   */
  private async storeSeries(
    user: SignedInUser,
    actor: Actor,
    found: ClinicalCase,
    chosen: SeriesToStore[],
    options: {
      keepBytes: boolean;
      progressToken: string | undefined;
      uploadId: string | null;
      skippedCount: number;
      /** Throws when the client has gone (the upload was cancelled): nothing is stored then. */
      assertStillWanted?: () => void;
    },
  ): Promise<ImageSeriesView[]> {
    const { pool, store, progress, settings } = this.dependencies;
    const { progressToken } = options;
    const decodedBytes = chosen.reduce(
      (sum, entry) => sum + voxelCount(entry.plan.geometry.dimensions) * 2,
      0,
    );
    const maxDecodedBytes = settings.pool.limits.maxDecodedBytes;
    if (decodedBytes > maxDecodedBytes) {
      throw new ImagingRefusal(
        413,
        'too-large',
        `The chosen series decode to ${(decodedBytes / 1_048_576).toFixed(0)} MB of voxels; one ` +
          `upload may store at most ${(maxDecodedBytes / 1_048_576).toFixed(0)} MB at a time. ` +
          'Keep fewer series at once.',
      );
    }
    progress.set(progressToken, user.id, {
      stage: 'decoding',
      files: { done: 0, total: chosen.reduce((sum, entry) => sum + entry.files.length, 0) },
      series: chosen.map((entry) => ({
        key: entry.key,
        description: entry.plan.description,
        done: 0,
        total: entry.plan.slices.length,
      })),
    });
    const assembled: { entry: SeriesToStore; series: AssembledSeries }[] = [];
    let filesBefore = 0;
    for (const [position, entry] of chosen.entries()) {
      const framesBefore = entry.plan.images.map((_, index) =>
        entry.plan.images
          .slice(0, index)
          .reduce((sum, image) => sum + image.scanned.frames.length, 0),
      );
      const decoded = await pool.decode(entry.files, {
        keepBytes: options.keepBytes,
        onProgress: ({ fileIndex, framesDone }) =>
          progress.update(progressToken, user.id, (state) => {
            state.files.done = filesBefore + fileIndex;
            state.series[position].done = framesBefore[fileIndex] + framesDone;
          }),
      });
      filesBefore += entry.files.length;
      progress.update(progressToken, user.id, (state) => {
        state.files.done = filesBefore;
        state.series[position].done = entry.plan.slices.length;
      });
      assembled.push({ entry, series: assembleSeries(entry.plan, decoded) });
    }
    options.assertStillWanted?.();
    await this.refuseStoredAlready(
      found.id,
      assembled.map(({ series }) => series),
    );
    progress.update(progressToken, user.id, (state) => {
      state.stage = 'storing';
    });
    const written: string[] = [];
    let rows: ImageSeries[];
    try {
      // UID replacements, rows and audit in one transaction: a failure keeps none of them.
      rows = await this.em.transactional(async (em) => {
        const prepared: ImageSeries[] = [];
        for (const { series: volume } of assembled) {
          prepared.push(await this.prepareSeries(em, user, found, volume, written));
        }
        for (const row of prepared) {
          recordAudit(em, actor, {
            action: 'series.upload',
            entityType: 'case',
            entityId: found.id,
            detail: {
              seriesId: row.id,
              sliceCount: row.sliceCount,
              skippedCount: options.skippedCount,
              ...(options.uploadId ? { uploadId: options.uploadId } : {}),
            },
          });
        }
        return prepared;
      });
    } catch (error) {
      // Nothing of a failed upload stays behind: not the rows, not the volumes.
      await Promise.all(written.map((key) => store.remove(key)));
      throw error;
    }
    progress.update(progressToken, user.id, (state) => {
      state.stage = 'done';
    });
    return rows.map((row) => toView(row, user.displayName));
  }

  /** De-identifies one assembled series and writes its volume; the row is persisted, not flushed. */
  private async prepareSeries(
    em: EntityManager,
    user: SignedInUser,
    found: ClinicalCase,
    assembled: AssembledSeries,
    written: string[],
  ): Promise<ImageSeries> {
    const { store } = this.dependencies;
    const header = await this.deidentifiedHeader(em, found.id, assembled);
    const uid = (tag: string, name: string) => {
      const value = firstString(header.dataset, tag);
      if (!value) throw new ImagingRefusal(400, 'malformed', `The slices lack a ${name}.`);
      return value;
    };
    const seriesUid = uid('0020000E', 'Series Instance UID (0020,000E)');
    const studyUid = uid('0020000D', 'Study Instance UID (0020,000D)');
    const frameOfReferenceUid = uid('00200052', 'Frame of Reference UID (0020,0052)');
    // Checked again inside the transaction: another upload may have stored it meanwhile.
    const stored = await em.findOne(ImageSeries, { clinicalCase: found.id, seriesUid });
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
    written.push(storageKey);
    const byteLength = await store.writeAtomically(storageKey, [
      preamble,
      littleEndianBytes(assembled.voxels),
    ]);
    const series = new ImageSeries({
      clinicalCase: em.getReference(ClinicalCase, found.id, { wrapped: true }),
      uploadedBy: em.getReference(User, user.id, { wrapped: true }),
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
    series.compression = assembled.compression;
    em.persist(series);
    return series;
  }

  /**
   * 409 before anything is written when a chosen series is stored for the case already: its
   * original Series Instance UID has a replacement, and a series of the case carries it.
   */
  private async refuseStoredAlready(
    caseId: string,
    series: readonly AssembledSeries[],
  ): Promise<void> {
    const keys = this.deidentificationKeys(caseId);
    for (const entry of series) {
      const original = firstString(entry.firstSliceHeader, '0020000E');
      if (!original) continue;
      const replacement = await this.em.findOne(
        UidReplacement,
        { clinicalCase: caseId, originalHash: keys.hashOfUid(original) },
        { disableIdentityMap: true },
      );
      if (!replacement) continue;
      const stored = await this.em.findOne(ImageSeries, {
        clinicalCase: caseId,
        seriesUid: replacement.replacementUid,
      });
      if (stored) {
        throw new ImagingRefusal(
          409,
          'duplicate-series',
          `This series is stored for the case already (series ${stored.id}).`,
        );
      }
    }
  }

  private deidentificationKeys(caseId: string): CaseDeidentificationKeys {
    return new CaseDeidentificationKeys(this.dependencies.settings.deidentificationSecret, caseId);
  }

  private async deidentifiedHeader(em: EntityManager, caseId: string, assembled: AssembledSeries) {
    const keys = this.deidentificationKeys(caseId);
    const originals = uidsToReplace(assembled.firstSliceHeader);
    const replacements = await resolveUidReplacements(em, caseId, keys, originals);
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
    compression: series.compression ?? null,
    uploadedBy: { id: series.uploadedBy.id, displayName: uploaderName },
    createdAt: series.createdAt.toISOString(),
  };
}

function fileOf(entry: ScannedEntry): { label: string; bytes: Uint8Array } {
  return { label: entry.label, bytes: entry.bytes };
}

/**
 * Throws when the client closed the connection before the answer (it cancelled the upload):
 * a cancelled upload is neither stored nor held for a choice.
 */
function assertStillWanted(request: Request, response: Response): void {
  if (request.socket.destroyed || response.writableEnded || response.destroyed) {
    throw new ImagingRefusal(400, 'cancelled', 'The upload was cancelled before it was read.');
  }
}
