import { Router, type Request } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { amendDecisionSchema, recordDecisionSchema } from '@emberline/shared';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import type { BoardRoom } from '../board-session/board-room';
import { DecisionService } from './decision.service';
import type { SignerCredentials } from './signature-check';

/**
 * Decision routes, mounted at /api (module README):
 *   POST /cases/:id/decision             RecordDecision → 201 DecisionView (a proceduralist of
 *                                        the board, re-authenticated)
 *   GET  /cases/:id/decision             DecisionView, 404 while there is none
 *   POST /cases/:id/decision/amendments  AmendDecision → 201 DecisionView (a proceduralist of
 *                                        the board, re-authenticated)
 */
export function decisionRoutes(orm: MikroORM, room: BoardRoom): Router {
  const router = Router();
  const decisions = () => new DecisionService(orm.em, room);
  const caseId = (value: unknown) => pathId(value, 'The case');
  const credentials = (request: Request, password: string | undefined): SignerCredentials => ({
    password,
    signedInAt: request.session.signedInAt,
  });

  router.get('/cases/:id/decision', requireSignIn, async (request, response) => {
    response.json(
      await decisions().get(signedInUser(request), actorOf(request), caseId(request.params.id)),
    );
  });

  router.post('/cases/:id/decision', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const body = parse(recordDecisionSchema, request.body);
    const view = await decisions().record(
      signedInUser(request),
      actorOf(request),
      id,
      body,
      credentials(request, body.password),
    );
    response.status(201).location(`/api/cases/${id}/decision`).json(view);
  });

  router.post('/cases/:id/decision/amendments', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const body = parse(amendDecisionSchema, request.body);
    const view = await decisions().amend(
      signedInUser(request),
      actorOf(request),
      id,
      body,
      credentials(request, body.password),
    );
    response.status(201).location(`/api/cases/${id}/decision`).json(view);
  });

  return router;
}
