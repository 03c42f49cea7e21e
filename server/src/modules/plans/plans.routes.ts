import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { createPlanSchema, updatePlanSchema, type Role } from '@emberline/shared';
import { actorOf, requireRole, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import { ApplicatorProfileService } from './applicator-profile.service';
import { PlanService } from './plan.service';
import { SafetyProfileService } from './safety-profile.service';

/** Roles that work on cases (DEVELOPERS.md, "Roles"); the administrator's is not one of them. */
const clinicalRoles: Role[] = [
  'presenting-physician',
  'board-member',
  'proceduralist',
  'nurse-coordinator',
];

/**
 * Needle plan routes, mounted at /api:
 *   POST   /cases/:id/plans            CreatePlan → 201, the plan
 *   GET    /cases/:id/plans            the case's plans, oldest first
 *   GET    /plans/:id                  the plan
 *   PATCH  /plans/:id                  UpdatePlan (drafts only) → the plan
 *   POST   /plans/:id/copy             → 201, a new draft with the same applicators
 *   DELETE /plans/:id                  (drafts only) → 204
 *   GET    /applicator-profiles        profiles not retired, for drafting (clinical roles)
 *   GET    /safety-profiles            every safety profile, the default first (clinical roles),
 *                                      to choose the one an assessment is judged by
 *   GET    /safety-profiles/default    the default safety profile (clinical roles)
 */
export function planRoutes(orm: MikroORM): Router {
  const router = Router();
  const plans = () => new PlanService(orm.em);
  const caseId = (value: unknown) => pathId(value, 'The case');
  const planId = (value: unknown) => pathId(value, 'The plan');

  router.post('/cases/:id/plans', requireSignIn, async (request, response) => {
    const body = parse(createPlanSchema, request.body);
    const created = await plans().create(
      signedInUser(request),
      actorOf(request),
      caseId(request.params.id),
      body,
    );
    response.status(201).location(`/api/plans/${created.id}`).json(created);
  });

  router.get('/cases/:id/plans', requireSignIn, async (request, response) => {
    response.json(
      await plans().list(signedInUser(request), actorOf(request), caseId(request.params.id)),
    );
  });

  router.get('/plans/:id', requireSignIn, async (request, response) => {
    response.json(
      await plans().get(signedInUser(request), actorOf(request), planId(request.params.id)),
    );
  });

  router.patch('/plans/:id', requireSignIn, async (request, response) => {
    const body = parse(updatePlanSchema, request.body);
    response.json(
      await plans().update(
        signedInUser(request),
        actorOf(request),
        planId(request.params.id),
        body,
      ),
    );
  });

  router.post('/plans/:id/copy', requireSignIn, async (request, response) => {
    const copy = await plans().copyAsDraft(
      signedInUser(request),
      actorOf(request),
      planId(request.params.id),
    );
    response.status(201).location(`/api/plans/${copy.id}`).json(copy);
  });

  router.delete('/plans/:id', requireSignIn, async (request, response) => {
    await plans().remove(signedInUser(request), actorOf(request), planId(request.params.id));
    response.status(204).end();
  });

  router.get('/applicator-profiles', requireRole(...clinicalRoles), async (_request, response) => {
    response.json(await new ApplicatorProfileService(orm.em).list({ isRetiredIncluded: false }));
  });

  router.get('/safety-profiles', requireRole(...clinicalRoles), async (_request, response) => {
    response.json(await new SafetyProfileService(orm.em).list());
  });

  router.get(
    '/safety-profiles/default',
    requireRole(...clinicalRoles),
    async (_request, response) => {
      response.json(await new SafetyProfileService(orm.em).getDefault());
    },
  );

  return router;
}
