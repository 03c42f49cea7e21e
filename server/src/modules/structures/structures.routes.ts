import { join } from 'node:path';
import { pipeline } from 'node:stream/promises';
import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { z } from 'zod';
import { updateStructureSchema } from '@emberline/shared';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { NotFoundError } from '../../common/errors';
import { parse } from '../../common/validate';
import { FileStore } from '../imaging/file-store';
import { structuresSettingsFromEnvironment, type StructuresSettings } from './structures-settings';
import { StructuresService } from './structures.service';

const idSchema = z.uuid();

/** The label maps' own folder of the file store. */
export function labelMapStore(settings: StructuresSettings): FileStore {
  return new FileStore(join(settings.fileStoreDir, 'label-maps'));
}

/**
 * Structure routes, mounted at /api:
 *   POST  /series/:id/structures   multipart (field `file`, optional `labels`) → 201, all of them
 *   GET   /series/:id/structures   the series' structures, by label value
 *   GET   /series/:id/label-map    the label map body (`decodeLabelMapFile` of shared/ reads it)
 *   PATCH /structures/:id          { kind, name? } → the structure
 */
export function structuresRoutes(
  orm: MikroORM,
  settings: StructuresSettings = structuresSettingsFromEnvironment(),
): Router {
  const router = Router();
  const dependencies = { settings, store: labelMapStore(settings) };
  const service = () => new StructuresService(orm.em, dependencies);
  const idOf = (value: unknown, what: string) => {
    // A malformed id names nothing: the same 404 as a record out of reach.
    const result = idSchema.safeParse(value);
    if (!result.success) throw new NotFoundError(what);
    return result.data;
  };

  router.post('/series/:id/structures', requireSignIn, async (request, response) => {
    const structures = await service().importFromRequest(
      signedInUser(request),
      actorOf(request),
      idOf(request.params.id, 'The series'),
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
        idOf(request.params.id, 'The series'),
      ),
    );
  });

  router.get('/series/:id/label-map', requireSignIn, async (request, response) => {
    const { stream, byteLength } = await service().openLabelMap(
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

  router.patch('/structures/:id', requireSignIn, async (request, response) => {
    const id = idOf(request.params.id, 'The structure');
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
