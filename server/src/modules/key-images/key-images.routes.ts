import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { createKeyImageSchema, type CreateKeyImage } from '@emberline/shared';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { ValidationError } from '../../common/errors';
import { sendStoredFile } from '../../common/send-stored-file';
import { parse, pathId } from '../../common/validate';
import { FileStore } from '../imaging/file-store';
import { imagingSettingsFromEnvironment } from '../imaging/imaging-settings';
import { receiveKeyImage } from './key-image-upload';
import { KeyImageService } from './key-image.service';

/**
 * Key image routes, mounted at /api (module README for the rules):
 *   GET    /cases/:id/key-images        KeyImageView[] with canDelete, oldest first
 *   POST   /cases/:id/key-images        multipart `image` (PNG) + `meta` (CreateKeyImage JSON)
 *                                       → 201 KeyImageView
 *   GET    /key-images/:id/image.png    the PNG
 *   DELETE /key-images/:id              204 (the author)
 */
export function keyImageRoutes(orm: MikroORM, store?: FileStore): Router {
  const router = Router();
  const files = store ?? keyImageStore();
  const keyImages = () => new KeyImageService(orm.em, files);
  const caseId = (value: unknown) => pathId(value, 'The case');
  const keyImageId = (value: unknown) => pathId(value, 'The key image');

  router.get('/cases/:id/key-images', requireSignIn, async (request, response) => {
    response.json(
      await keyImages().list(signedInUser(request), actorOf(request), caseId(request.params.id)),
    );
  });
  router.post('/cases/:id/key-images', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const received = await receiveKeyImage(request, response);
    const meta = parseMeta(received.metaText);
    const created = await keyImages().create(
      signedInUser(request),
      actorOf(request),
      id,
      meta,
      received.png,
    );
    response.status(201).location(`/api/key-images/${created.id}`).json(created);
  });
  router.get('/key-images/:id/image.png', requireSignIn, async (request, response) => {
    const file = await keyImages().openImage(
      signedInUser(request),
      actorOf(request),
      keyImageId(request.params.id),
    );
    await sendStoredFile(response, file, 'image/png');
  });
  router.delete('/key-images/:id', requireSignIn, async (request, response) => {
    await keyImages().delete(
      signedInUser(request),
      actorOf(request),
      keyImageId(request.params.id),
    );
    response.status(204).end();
  });
  return router;
}

/** The key images' store: the imaging file store's root, folder `key-images/`. */
export function keyImageStore(): FileStore {
  return new FileStore(imagingSettingsFromEnvironment().fileStoreDir);
}

/** The `meta` field: JSON, then the shared schema; every error names `meta.<field>`. */
function parseMeta(text: string): CreateKeyImage {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    const message = 'The description is not JSON.';
    throw new ValidationError(`meta: ${message}`, [{ path: 'meta', message }]);
  }
  try {
    return parse(createKeyImageSchema, value);
  } catch (error) {
    if (!(error instanceof ValidationError)) throw error;
    const errors = error.errors.map((entry) => ({
      path: entry.path === '(body)' ? 'meta' : `meta.${entry.path}`,
      message: entry.message,
    }));
    throw new ValidationError(`${errors[0]?.path}: ${errors[0]?.message}`, errors);
  }
}
