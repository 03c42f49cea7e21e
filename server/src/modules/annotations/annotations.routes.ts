import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { createAnnotationSchema, updateAnnotationSchema } from '@emberline/shared';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import type { BoardRoom } from '../board-session/board-room';
import { AnnotationService } from './annotation.service';

/**
 * Annotation routes, mounted at /api (module README for the rules):
 *   GET    /cases/:id/annotations   AnnotationView[] with canEdit, oldest first
 *   POST   /cases/:id/annotations   CreateAnnotation → 201 AnnotationView
 *   PATCH  /annotations/:id         UpdateAnnotation → AnnotationView (author, chair)
 *   DELETE /annotations/:id         204 (author, chair)
 */
export function annotationRoutes(orm: MikroORM, room: BoardRoom): Router {
  const router = Router();
  const annotations = () => new AnnotationService(orm.em, room);
  const caseId = (value: unknown) => pathId(value, 'The case');
  const annotationId = (value: unknown) => pathId(value, 'The annotation');

  router.get('/cases/:id/annotations', requireSignIn, async (request, response) => {
    response.json(await annotations().list(signedInUser(request), caseId(request.params.id)));
  });
  router.post('/cases/:id/annotations', requireSignIn, async (request, response) => {
    const body = parse(createAnnotationSchema, request.body);
    const created = await annotations().create(
      signedInUser(request),
      actorOf(request),
      caseId(request.params.id),
      body,
    );
    response.status(201).location(`/api/annotations/${created.id}`).json(created);
  });
  router.patch('/annotations/:id', requireSignIn, async (request, response) => {
    const changes = parse(updateAnnotationSchema, request.body);
    response.json(
      await annotations().update(
        signedInUser(request),
        actorOf(request),
        annotationId(request.params.id),
        changes,
      ),
    );
  });
  router.delete('/annotations/:id', requireSignIn, async (request, response) => {
    await annotations().delete(
      signedInUser(request),
      actorOf(request),
      annotationId(request.params.id),
    );
    response.status(204).end();
  });
  return router;
}
