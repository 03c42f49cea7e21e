/**
 * Gives the demo case NLB-2026-014 the invented abdominal CT of sample-data/ and its label map,
 * once. The series goes in through the upload route's own code: a multipart request, sent on
 * the loopback to a one-route server that calls `ImagingService.upload` (multer, the reading
 * workers, de-identification, the file store: nothing is skipped). The label map then goes
 * through `StructuresService.importFile`, the import route's code after its multipart step.
 */
import { once } from 'node:events';
import type { AddressInfo } from 'node:net';
import express from 'express';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { ImageSeriesView } from '@emberline/shared';
import { generateAbdomenCt } from '../../sample-data/generate-abdomen-ct';
import { AppError } from '../src/common/errors';
import type { Actor, SignedInUser } from '../src/common/request-context';
import { ClinicalCase } from '../src/modules/cases/case.entity';
import { imagingDependencies } from '../src/modules/imaging/imaging.routes';
import { ImageSeries } from '../src/modules/imaging/image-series.entity';
import {
  imagingSettingsFromEnvironment,
  type ImagingSettings,
} from '../src/modules/imaging/imaging-settings';
import { ImagingService } from '../src/modules/imaging/imaging.service';
import { labelMapStore } from '../src/modules/structures/structures.routes';
import {
  structuresSettingsFromEnvironment,
  type StructuresSettings,
} from '../src/modules/structures/structures-settings';
import { StructuresService } from '../src/modules/structures/structures.service';
import { loadSignedInUser } from '../src/modules/users/user.service';

export const demoImagingCaseCode = 'NLB-2026-014';

/** Uploads the slices as the presenter would, through `ImagingService.upload`. */
async function uploadThroughService(
  em: EntityManager,
  settings: ImagingSettings,
  presenter: SignedInUser,
  actor: Actor,
  caseId: string,
  slices: { name: string; bytes: ArrayBuffer }[],
): Promise<ImageSeriesView> {
  const dependencies = imagingDependencies(settings);
  const app = express();
  app.post('/upload', async (request, response) => {
    const service = new ImagingService(em.fork(), dependencies);
    const outcome = await service.upload(presenter, actor, caseId, request, response, undefined);
    if (outcome.status !== 201) throw new Error('the demo CT was read as several series');
    response.status(201).json(outcome.series);
  });
  app.use(
    (error: unknown, _request: express.Request, response: express.Response, _next: unknown) => {
      const isKnown = error instanceof AppError;
      response
        .status(isKnown ? error.status : 500)
        .json({ detail: isKnown ? error.message : 'unexpected error' });
    },
  );
  const server = app.listen(0, '127.0.0.1');
  try {
    await once(server, 'listening');
    const { port } = server.address() as AddressInfo;
    const form = new FormData();
    for (const slice of slices) {
      form.append('files', new Blob([slice.bytes], { type: 'application/dicom' }), slice.name);
    }
    const answer = await fetch(`http://127.0.0.1:${port}/upload`, { method: 'POST', body: form });
    const body: unknown = await answer.json();
    if (answer.status !== 201) {
      throw new Error(`the demo CT was refused (${answer.status}): ${JSON.stringify(body)}`);
    }
    return body as ImageSeriesView;
  } finally {
    server.close();
    await dependencies.pool.close();
    dependencies.pending.close();
  }
}

/**
 * When the demo case has no series: generates the CT, uploads it and imports its labels.
 * Answers true when it did, false when there was nothing to do (idempotent).
 */
export async function seedDemoImaging(
  em: EntityManager,
  settings: { imaging: ImagingSettings; structures: StructuresSettings } = {
    imaging: imagingSettingsFromEnvironment(),
    structures: structuresSettingsFromEnvironment(),
  },
): Promise<boolean> {
  const found = await em.fork().findOne(ClinicalCase, { caseCode: demoImagingCaseCode });
  if (!found) return false;
  if (await em.fork().count(ImageSeries, { clinicalCase: found.id })) return false;
  const presenter = await loadSignedInUser(em.fork(), found.presenter.id, 'local');
  if (!presenter) throw new Error('the demo case has no active presenter');
  const actor: Actor = { id: presenter.id, email: presenter.email, ip: null };

  const generated = generateAbdomenCt();
  const series = await uploadThroughService(
    em,
    settings.imaging,
    presenter,
    actor,
    found.id,
    generated.slices.map((bytes, index) => ({
      name: generated.sliceFileNames[index].split('/').pop() ?? `slice-${index}.dcm`,
      bytes,
    })),
  );
  const structures = new StructuresService(em.fork(), {
    settings: settings.structures,
    store: labelMapStore(settings.structures),
  });
  const imported = await structures.importFile(
    presenter,
    actor,
    series.id,
    generated.labelMapNiftiGz,
    JSON.stringify(generated.labels),
  );
  // The presenter confirms the lesion the import suggested for each tumour (the invented CT's
  // tumours are those of the case's Summary), so that the demo names tumours by lesion.
  for (const structure of imported.structures) {
    if (structure.kind !== 'tumour' || !structure.lesionId) continue;
    await new StructuresService(em.fork(), {
      settings: settings.structures,
      store: labelMapStore(settings.structures),
    }).update(presenter, actor, structure.id, {
      lesionId: structure.lesionId,
      isLesionConfirmed: true,
    });
  }
  return true;
}
