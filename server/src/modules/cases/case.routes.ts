import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import {
  caseListQuerySchema,
  createCaseSchema,
  createLabPanelSchema,
  createLesionSchema,
  correctLabPanelSchema,
  updateCaseSchema,
  updateLesionSchema,
  withdrawLabPanelSchema,
} from '@emberline/shared';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import { FileStore } from '../imaging/file-store';
import { imagingSettingsFromEnvironment } from '../imaging/imaging-settings';
import { structuresSettingsFromEnvironment } from '../structures/structures-settings';
import { labelMapStore } from '../structures/structures.routes';
import { CaseService } from './case.service';

export function caseRoutes(orm: MikroORM): Router {
  const router = Router();
  router.use(requireSignIn);
  const stores = {
    volumes: new FileStore(imagingSettingsFromEnvironment().fileStoreDir),
    labelMaps: labelMapStore(structuresSettingsFromEnvironment()),
  };
  const service = () => new CaseService(orm.em, stores);
  const caseId = (value: unknown) => pathId(value, 'The case');

  router.get('/', async (request, response) => {
    const query = parse(caseListQuerySchema, request.query);
    response.json(await service().list(signedInUser(request), query));
  });

  router.post('/', async (request, response) => {
    const body = parse(createCaseSchema, request.body);
    const created = await service().create(signedInUser(request), actorOf(request), body);
    response.status(201).location(`/api/cases/${created.id}`).json(created);
  });

  router.get('/:id', async (request, response) => {
    response.json(
      await service().get(signedInUser(request), actorOf(request), caseId(request.params.id)),
    );
  });

  router.patch('/:id', async (request, response) => {
    const body = parse(updateCaseSchema, request.body);
    response.json(
      await service().update(
        signedInUser(request),
        actorOf(request),
        caseId(request.params.id),
        body,
      ),
    );
  });

  router.delete('/:id', async (request, response) => {
    await service().remove(signedInUser(request), actorOf(request), caseId(request.params.id));
    response.status(204).end();
  });

  router.post('/:id/lesions', async (request, response) => {
    const body = parse(createLesionSchema, request.body);
    response
      .status(201)
      .json(
        await service().addLesion(
          signedInUser(request),
          actorOf(request),
          caseId(request.params.id),
          body,
        ),
      );
  });

  router.patch('/:id/lesions/:lesionId', async (request, response) => {
    const id = caseId(request.params.id);
    const lesionId = pathId(request.params.lesionId, 'The lesion');
    const body = parse(updateLesionSchema, request.body);
    response.json(
      await service().updateLesion(signedInUser(request), actorOf(request), id, lesionId, body),
    );
  });

  router.post('/:id/lab-panels/:panelId/correction', async (request, response) => {
    const id = caseId(request.params.id);
    const panelId = pathId(request.params.panelId, 'The lab panel');
    const body = parse(correctLabPanelSchema, request.body);
    response
      .status(201)
      .json(
        await service().correctLabPanel(signedInUser(request), actorOf(request), id, panelId, body),
      );
  });

  router.post('/:id/lab-panels/:panelId/withdrawal', async (request, response) => {
    const id = caseId(request.params.id);
    const panelId = pathId(request.params.panelId, 'The lab panel');
    const { reason } = parse(withdrawLabPanelSchema, request.body);
    response.json(
      await service().withdrawLabPanel(
        signedInUser(request),
        actorOf(request),
        id,
        panelId,
        reason,
      ),
    );
  });

  router.delete('/:id/lesions/:lesionId', async (request, response) => {
    const detail = await service().removeLesion(
      signedInUser(request),
      actorOf(request),
      caseId(request.params.id),
      caseId(request.params.lesionId),
    );
    response.json(detail);
  });

  router.post('/:id/lab-panels', async (request, response) => {
    const body = parse(createLabPanelSchema, request.body);
    response
      .status(201)
      .json(
        await service().addLabPanel(
          signedInUser(request),
          actorOf(request),
          caseId(request.params.id),
          body,
        ),
      );
  });

  return router;
}
