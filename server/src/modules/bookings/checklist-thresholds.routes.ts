import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { updateThresholdSchema } from '@emberline/shared';
import { actorOf, requireRole, signedInUser } from '../../common/auth-middleware';
import { parse } from '../../common/validate';
import { ChecklistThresholdService } from './checklist-thresholds';

/**
 * The checklist's thresholds, mounted at /api/admin (administrators only):
 *   GET /checklist-thresholds         ThresholdView[]
 *   PUT /checklist-thresholds/:key    UpdateThreshold → ThresholdView (a source is required;
 *                                     audited as checklist-threshold.update)
 */
export function checklistThresholdRoutes(orm: MikroORM): Router {
  const router = Router();
  const service = () => new ChecklistThresholdService(orm.em);
  router.get('/checklist-thresholds', requireRole('administrator'), async (_request, response) => {
    response.json(await service().list());
  });
  router.put(
    '/checklist-thresholds/:key',
    requireRole('administrator'),
    async (request, response) => {
      const body = parse(updateThresholdSchema, request.body);
      response.json(
        await service().update(
          signedInUser(request),
          actorOf(request),
          String(request.params.key),
          body,
        ),
      );
    },
  );
  return router;
}
