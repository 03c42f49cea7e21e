import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { pathId } from '../../common/validate';
import { sendStoredFile } from '../../common/send-stored-file';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { DicomReadPool } from './dicom-read-pool';
import { FileStore } from './file-store';
import { imagingSettingsFromEnvironment, type ImagingSettings } from './imaging-settings';
import { ImagingService } from './imaging.service';

/**
 * Imaging routes, mounted at /api:
 *   POST /cases/:id/series      multipart upload (field `files`) → 201 with the series
 *   GET  /cases/:id/series      the case's series
 *   GET  /series/:id            one series
 *   GET  /series/:id/volume     the volume body (`decodeVolumeFile` of shared/ reads it)
 */
export function imagingRoutes(
  orm: MikroORM,
  settings: ImagingSettings = imagingSettingsFromEnvironment(),
): Router {
  const router = Router();
  const dependencies = {
    settings,
    pool: new DicomReadPool(settings.pool),
    store: new FileStore(settings.fileStoreDir),
  };
  const service = () => new ImagingService(orm.em, dependencies);

  router.post('/cases/:id/series', requireSignIn, async (request, response) => {
    const created = await service().upload(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The case'),
      request,
      response,
    );
    response.status(201).location(`/api/series/${created.id}`).json(created);
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

  return router;
}
