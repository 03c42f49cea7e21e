import { Router, type Request } from 'express';
import { z } from 'zod';
import type { MikroORM } from '@mikro-orm/postgresql';
import { parse, pathId } from '../../common/validate';
import { sendStoredFile } from '../../common/send-stored-file';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { DicomReadPool } from './dicom-read-pool';
import { FileStore } from './file-store';
import { imagingSettingsFromEnvironment, type ImagingSettings } from './imaging-settings';
import { ImagingService, type ImagingDependencies } from './imaging.service';
import { PendingUploads, UploadProgressBoard } from './pending-uploads';
import { SeriesRemoval } from './series-removal';
import { structuresSettingsFromEnvironment } from '../structures/structures-settings';
import { labelMapStore } from '../structures/structures.routes';

const keepSchema = z.object({ keys: z.array(z.string().min(1).max(16)).min(1).max(100) }).strict();
const progressTokenSchema = z.string().uuid();

/** The client's `?progress=<uuid>`, or undefined when absent or not a UUID. */
function progressToken(request: Request): string | undefined {
  const value = request.query.progress;
  return typeof value === 'string' && progressTokenSchema.safeParse(value).success
    ? value
    : undefined;
}

/**
 * Imaging routes, mounted at /api:
 *   POST /cases/:id/series      multipart upload (field `files`) → 201 with the series, or 202
 *                               with the listing when the upload holds several series
 *   POST /uploads/:id/keep      { keys } → 201 with the series kept
 *   DELETE /uploads/:id         discard an upload waiting for a choice → 204
 *   GET  /upload-progress/:token  progress of an upload or keep sent with ?progress=<token>
 *   GET  /cases/:id/series      the case's series
 *   GET  /series/:id            one series
 *   GET  /series/:id/volume     the volume body (`decodeVolumeFile` of shared/ reads it)
 *   GET  /series/:id/removal    what goes with the series, and what blocks its removal
 *   DELETE /series/:id          removes it with its structures, label map, annotations and
 *                               plans → 204; 409 naming the plans when an assessment ran on it
 */
/** What the imaging service needs beyond the database: readers, store, waiting uploads. */
export function imagingDependencies(settings: ImagingSettings): ImagingDependencies {
  return {
    settings,
    pool: new DicomReadPool(settings.pool),
    store: new FileStore(settings.fileStoreDir),
    pending: new PendingUploads(settings.pending),
    progress: new UploadProgressBoard(),
  };
}

export function imagingRoutes(
  orm: MikroORM,
  settings: ImagingSettings = imagingSettingsFromEnvironment(),
): Router {
  const router = Router();
  const dependencies = imagingDependencies(settings);
  const service = () => new ImagingService(orm.em, dependencies);
  const removalStores = {
    volumes: dependencies.store,
    labelMaps: labelMapStore(structuresSettingsFromEnvironment()),
  };
  const removal = () => new SeriesRemoval(orm.em, removalStores);

  router.post('/cases/:id/series', requireSignIn, async (request, response) => {
    const outcome = await service().upload(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The case'),
      request,
      response,
      progressToken(request),
    );
    if (outcome.status === 201) {
      response.status(201).location(`/api/series/${outcome.series.id}`).json(outcome.series);
    } else {
      response.status(202).json(outcome.listing);
    }
  });

  router.post('/uploads/:id/keep', requireSignIn, async (request, response) => {
    const { keys } = parse(keepSchema, request.body);
    const kept = await service().keep(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The upload'),
      keys,
      progressToken(request),
    );
    response.status(201).json(kept);
  });

  router.delete('/uploads/:id', requireSignIn, async (request, response) => {
    await service().discard(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The upload'),
    );
    response.status(204).end();
  });

  router.get('/upload-progress/:token', requireSignIn, (request, response) => {
    response.json(
      service().progressOf(
        signedInUser(request),
        pathId(request.params.token, 'The upload progress'),
      ),
    );
  });

  router.get('/cases/:id/series', requireSignIn, async (request, response) => {
    response.json(
      await service().list(
        signedInUser(request),
        actorOf(request),
        pathId(request.params.id, 'The case'),
      ),
    );
  });

  router.get('/series/:id', requireSignIn, async (request, response) => {
    response.json(
      await service().get(
        signedInUser(request),
        actorOf(request),
        pathId(request.params.id, 'The series'),
      ),
    );
  });

  router.get('/series/:id/volume', requireSignIn, async (request, response) => {
    const file = await service().openVolume(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The series'),
    );
    await sendStoredFile(response, file);
  });

  router.get('/series/:id/removal', requireSignIn, async (request, response) => {
    response.json(
      await removal().preview(
        signedInUser(request),
        actorOf(request),
        pathId(request.params.id, 'The series'),
      ),
    );
  });

  router.delete('/series/:id', requireSignIn, async (request, response) => {
    await removal().remove(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The series'),
    );
    response.status(204).end();
  });

  return router;
}
