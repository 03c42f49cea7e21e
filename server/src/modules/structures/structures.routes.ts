import { join } from 'node:path';
import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { updateStructureSchema } from '@emberline/shared';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import { sendStoredFile } from '../../common/send-stored-file';
import { FileStore } from '../imaging/file-store';
import { DicomSegReader } from './dicom-seg-reader';
import { structuresSettingsFromEnvironment, type StructuresSettings } from './structures-settings';
import { StructuresService } from './structures.service';

/** The label maps' own folder of the file store. */
export function labelMapStore(settings: StructuresSettings): FileStore {
  return new FileStore(join(settings.fileStoreDir, 'label-maps'));
}

/**
 * Structure routes, mounted at /api:
 *   POST  /series/:id/structures   multipart (field `file`, optional `labels`) → 201
 *                                  { structures: all of them, overlaps: SEG overlaps resolved }
 *   GET   /series/:id/structures   the series' structures, by label value
 *   GET   /series/:id/label-map    the label map body (`decodeLabelMapFile` of shared/ reads it)
 *   PATCH /structures/:id          { kind?, name?, lesionId?, isLesionConfirmed? } → the structure
 */
export function structuresRoutes(
  orm: MikroORM,
  settings: StructuresSettings = structuresSettingsFromEnvironment(),
): Router {
  const router = Router();
  const dependencies = {
    settings,
    store: labelMapStore(settings),
    segmentationReader: new DicomSegReader(settings.segmentationRead),
  };
  const service = () => new StructuresService(orm.em, dependencies);

  router.post('/series/:id/structures', requireSignIn, async (request, response) => {
    const structures = await service().importFromRequest(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The series'),
      request,
      response,
    );
    response.status(201).json(structures);
  });

  router.get('/series/:id/structures', requireSignIn, async (request, response) => {
    response.json(
      await service().list(
        signedInUser(request),
        actorOf(request),
        pathId(request.params.id, 'The series'),
      ),
    );
  });

  router.get('/series/:id/label-map', requireSignIn, async (request, response) => {
    const file = await service().openLabelMap(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The series'),
    );
    await sendStoredFile(response, file);
  });

  router.patch('/structures/:id', requireSignIn, async (request, response) => {
    const id = pathId(request.params.id, 'The structure');
    response.json(
      await service().update(
        signedInUser(request),
        actorOf(request),
        id,
        parse(updateStructureSchema, request.body),
      ),
    );
  });

  return router;
}
