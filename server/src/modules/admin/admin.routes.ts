import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { z } from 'zod';
import {
  addMembershipSchema,
  auditQuerySchema,
  boardQuorumSchema,
  createBoardSchema,
  createUserSchema,
  rolePolicySchema,
  roles,
  updateUserSchema,
} from '@emberline/shared';
import { actorOf, requireRole } from '../../common/auth-middleware';
import { NotFoundError } from '../../common/errors';
import { parse, pathId } from '../../common/validate';
import { listAuditEvents } from '../audit/audit.service';
import type { BoardRoom } from '../board-session/board-room';
import { AdminService } from './admin.service';

/**
 * `room` closes the live sockets of a user whose access shrinks (deactivated, roles changed, a
 * membership removed): they reconnect, if they still may, with what they may now do.
 */
export function adminRoutes(orm: MikroORM, room: BoardRoom): Router {
  const router = Router();
  router.use(requireRole('administrator'));
  const service = () => new AdminService(orm.em);

  router.get('/users', async (_request, response) => {
    response.json(await service().listUsers());
  });
  router.post('/users', async (request, response) => {
    response
      .status(201)
      .json(await service().createUser(actorOf(request), parse(createUserSchema, request.body)));
  });
  router.patch('/users/:id', async (request, response) => {
    const body = parse(updateUserSchema, request.body);
    const userId = pathId(request.params.id, 'The user');
    const updated = await service().updateUser(actorOf(request), userId, body);
    if (body.isActive === false || body.roles !== undefined) room.disconnectUser(userId);
    response.json(updated);
  });

  router.get('/boards', async (_request, response) => {
    response.json(await service().listBoards());
  });
  router.post('/boards', async (request, response) => {
    response
      .status(201)
      .json(await service().createBoard(actorOf(request), parse(createBoardSchema, request.body)));
  });
  router.put('/boards/:id/quorum', async (request, response) => {
    const { requiredSpecialties } = parse(boardQuorumSchema, request.body);
    response.json(
      await service().setQuorum(
        actorOf(request),
        pathId(request.params.id, 'The board'),
        requiredSpecialties,
      ),
    );
  });
  router.post('/boards/:id/members', async (request, response) => {
    const body = parse(addMembershipSchema, request.body);
    await service().addMembership(
      actorOf(request),
      pathId(request.params.id, 'The board'),
      body.userId,
      body.specialty,
    );
    response.status(204).end();
  });
  router.delete('/boards/:id/members/:userId', async (request, response) => {
    const userId = pathId(request.params.userId, 'The user');
    await service().removeMembership(
      actorOf(request),
      pathId(request.params.id, 'The board'),
      userId,
    );
    room.disconnectUser(userId);
    response.status(204).end();
  });

  router.get('/role-policies', async (_request, response) => {
    response.json(await service().listRolePolicies());
  });
  router.put('/role-policies/:role', async (request, response) => {
    const role = z.enum(roles).safeParse(request.params.role);
    if (!role.success) throw new NotFoundError('The role');
    const body = parse(rolePolicySchema, request.body);
    response.json(await service().setRolePolicy(actorOf(request), role.data, body.requiresTotp));
  });

  router.get('/audit', async (request, response) => {
    response.json(await listAuditEvents(orm.em, parse(auditQuerySchema, request.query)));
  });

  return router;
}
