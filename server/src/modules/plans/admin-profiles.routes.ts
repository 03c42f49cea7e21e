import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import {
  createApplicatorProfileSchema,
  safetyProfileBodySchema,
  updateApplicatorProfileSchema,
} from '@emberline/shared';
import { actorOf, requireRole } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import { ApplicatorProfileService } from './applicator-profile.service';
import { SafetyProfileService } from './safety-profile.service';

/**
 * Administration of applicator and safety profiles, mounted at /api/admin (administrators):
 *   GET   /applicator-profiles         every profile, retired ones too
 *   POST  /applicator-profiles         CreateApplicatorProfile → 201
 *   GET   /applicator-profiles/:id
 *   PATCH /applicator-profiles/:id     UpdateApplicatorProfile (`isRetired` retires it)
 *   GET   /safety-profiles             the default first
 *   POST  /safety-profiles             SafetyProfileBody → 201 (`isDefault` clears the other)
 *   GET   /safety-profiles/:id
 *   PATCH /safety-profiles/:id         any fields of SafetyProfileBody → the profile
 *
 * An edit of a profile version that an assessment used makes the profile's next version.
 */
export function adminProfileRoutes(orm: MikroORM): Router {
  const router = Router();
  const administrator = requireRole('administrator');
  const applicators = () => new ApplicatorProfileService(orm.em);
  const safety = () => new SafetyProfileService(orm.em);
  const applicatorId = (value: unknown) => pathId(value, 'The applicator profile');
  const safetyId = (value: unknown) => pathId(value, 'The safety profile');

  router.get('/applicator-profiles', administrator, async (_request, response) => {
    response.json(await applicators().list({ isRetiredIncluded: true }));
  });
  router.post('/applicator-profiles', administrator, async (request, response) => {
    const body = parse(createApplicatorProfileSchema, request.body);
    const created = await applicators().create(actorOf(request), body);
    response.status(201).location(`/api/admin/applicator-profiles/${created.id}`).json(created);
  });
  router.get('/applicator-profiles/:id', administrator, async (request, response) => {
    response.json(await applicators().get(applicatorId(request.params.id)));
  });
  router.patch('/applicator-profiles/:id', administrator, async (request, response) => {
    const id = applicatorId(request.params.id);
    const body = parse(updateApplicatorProfileSchema, request.body);
    response.json(await applicators().update(actorOf(request), id, body));
  });

  router.get('/safety-profiles', administrator, async (_request, response) => {
    response.json(await safety().list());
  });
  router.post('/safety-profiles', administrator, async (request, response) => {
    const body = parse(safetyProfileBodySchema, request.body);
    const created = await safety().create(actorOf(request), body);
    response.status(201).location(`/api/admin/safety-profiles/${created.id}`).json(created);
  });
  router.get('/safety-profiles/:id', administrator, async (request, response) => {
    response.json(await safety().get(safetyId(request.params.id)));
  });
  router.patch('/safety-profiles/:id', administrator, async (request, response) => {
    const id = safetyId(request.params.id);
    const parsed = parse(safetyProfileBodySchema.partial(), request.body);
    // Only the fields sent: the schema's defaults must not overwrite what is stored.
    const sent = new Set(Object.keys(request.body as object));
    const patch = Object.fromEntries(Object.entries(parsed).filter(([key]) => sent.has(key)));
    response.json(await safety().update(actorOf(request), id, patch));
  });

  return router;
}
