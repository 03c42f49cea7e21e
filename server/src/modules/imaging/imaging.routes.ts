import { pipeline } from 'node:stream/promises';
import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { z } from 'zod';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { NotFoundError } from '../../common/errors';
import { DicomReadPool } from './dicom-read-pool';
import { FileStore } from './file-store';
import { imagingSettingsFromEnvironment, type ImagingSettings } from './imaging-settings';
import { ImagingService } from './imaging.service';

const idSchema = z.uuid();

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
  const idOf = (value: unknown, what: string) => {
    // A malformed id names nothing: the same 404 as a record out of reach.
    const result = idSchema.safeParse(value);
    if (!result.success) throw new NotFoundError(what);
    return result.data;
  };

  router.post('/cases/:id/series', requireSignIn, async (request, response) => {
    const created = await service().upload(
      signedInUser(request),
      actorOf(request),
      idOf(request.params.id, 'The case'),
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
        idOf(request.params.id, 'The case'),
      ),
    );
  });

  router.get('/series/:id', requireSignIn, async (request, response) => {
    response.json(
      await service().get(
        signedInUser(request),
        actorOf(request),
        idOf(request.params.id, 'The series'),
      ),
    );
  });

  router.get('/series/:id/volume', requireSignIn, async (request, response) => {
    const { stream, byteLength } = await service().openVolume(
      signedInUser(request),
      actorOf(request),
      idOf(request.params.id, 'The series'),
    );
    response.status(200).set({
      'Content-Type': 'application/octet-stream',
      'Content-Length': String(byteLength),
      'Cache-Control': 'private, no-store',
    });
    try {
      await pipeline(stream, response);
    } catch (error) {
      // The client went away mid-body: nothing to answer, nothing to log.
      if ((error as { code?: unknown }).code === 'ERR_STREAM_PREMATURE_CLOSE') return;
      throw error;
    }
  });

  return router;
}
