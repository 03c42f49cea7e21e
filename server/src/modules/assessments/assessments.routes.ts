import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import {
  rehearsalCaution,
  requestAssessmentSchema,
  type RehearsalReplay,
  type RehearsalReplayView,
} from '@emberline/shared';
import { parse, pathId } from '../../common/validate';
import { sendStoredFile } from '../../common/send-stored-file';
import { NotFoundError } from '../../common/errors';
import type { AssessmentDisplayStore } from './assessment-display-store';
import type { AssessmentQueue } from './assessment-queue';
import { AssessmentService } from './assessment.service';

export interface AssessmentRouteDependencies {
  queue: AssessmentQueue | null;
  displays: AssessmentDisplayStore;
  isBioheatRequested: boolean;
  log: (message: string, error?: unknown) => void;
}

/**
 * Assessment routes, mounted at /api:
 *   POST /plans/:id/assessments    { safetyProfileId? } → 202 { id, status, inputs, … }
 *                                  (an identical snapshot of the inputs reuses its assessment)
 *   GET  /plans/:id/assessments    the plan's assessments, newest first
 *   GET  /assessments/:id          { id, status, progress, result?, error? }
 *   GET  /assessments/:id/display  zone masks and margins for the viewer (binary)
 */
export function assessmentRoutes(orm: MikroORM, dependencies: AssessmentRouteDependencies): Router {
  const router = Router();
  const service = () =>
    new AssessmentService(
      orm.em,
      dependencies.queue,
      dependencies.isBioheatRequested,
      dependencies.log,
    );

  router.post('/plans/:id/assessments', requireSignIn, async (request, response) => {
    const view = await service().request(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The plan'),
      parse(requestAssessmentSchema, request.body ?? {}),
    );
    response.status(202).location(`/api/assessments/${view.id}`).json(view);
  });

  router.get('/plans/:id/assessments', requireSignIn, async (request, response) => {
    response.json(
      await service().listForPlan(
        signedInUser(request),
        actorOf(request),
        pathId(request.params.id, 'The plan'),
      ),
    );
  });

  router.get('/assessments/:id', requireSignIn, async (request, response) => {
    response.json(
      await service().get(
        signedInUser(request),
        actorOf(request),
        pathId(request.params.id, 'The assessment'),
      ),
    );
  });

  router.get('/assessments/:id/display', requireSignIn, async (request, response) => {
    const view = await service().get(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The assessment'),
    );
    if (view.status !== 'done') throw new NotFoundError('The display data of this assessment');
    const file = await dependencies.displays.openRead(view.id).catch(() => {
      throw new NotFoundError('The display data of this assessment');
    });
    await sendStoredFile(response, file);
  });

  router.get('/assessments/:id/rehearsal', requireSignIn, async (request, response) => {
    const view = await service().get(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The assessment'),
    );
    const missing = () => new NotFoundError('The insertion rehearsal of this assessment');
    if (view.status !== 'done' || !view.result?.rehearsal?.length) throw missing();
    const file = await dependencies.displays.openReplays(view.id).catch(() => {
      throw missing();
    });
    const chunks: Buffer[] = [];
    for await (const chunk of file.stream) chunks.push(chunk as Buffer);
    const body: RehearsalReplayView = {
      caution: rehearsalCaution,
      replays: JSON.parse(Buffer.concat(chunks).toString('utf8')) as RehearsalReplay[],
    };
    response.json(body);
  });

  return router;
}
