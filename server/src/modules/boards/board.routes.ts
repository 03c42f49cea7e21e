import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import type { BoardMemberView, BoardView } from '@emberline/shared';
import { requireSignIn, signedInUser } from '../../common/auth-middleware';
import { NotFoundError } from '../../common/errors';
import { BoardMembership } from './board-membership.entity';
import { Board } from './board.entity';

export function boardRoutes(orm: MikroORM): Router {
  const router = Router();
  router.use(requireSignIn);

  /** The boards the signed-in user belongs to. */
  router.get('/', async (request, response) => {
    const user = signedInUser(request);
    const ids = [...user.memberships.keys()];
    const boards = ids.length
      ? await orm.em.find(Board, { id: { $in: ids } }, { orderBy: { name: 'asc' } })
      : [];
    const memberships = ids.length
      ? await orm.em.find(BoardMembership, { board: { $in: ids } })
      : [];
    const countOf = new Map<string, number>();
    for (const membership of memberships) {
      countOf.set(membership.board.id, (countOf.get(membership.board.id) ?? 0) + 1);
    }
    const views: BoardView[] = boards.map((board) => ({
      id: board.id,
      name: board.name,
      description: board.description,
      memberCount: countOf.get(board.id) ?? 0,
      mySpecialty: user.memberships.get(board.id) ?? null,
      requiredSpecialties: [...board.requiredSpecialties],
    }));
    response.json(views);
  });

  router.get('/:id/members', async (request, response) => {
    const user = signedInUser(request);
    const boardId = String(request.params.id);
    if (!user.memberships.has(boardId)) throw new NotFoundError('The board');
    const memberships = await orm.em.find(
      BoardMembership,
      { board: boardId },
      { populate: ['user'], orderBy: { user: { displayName: 'asc' } } },
    );
    const members: BoardMemberView[] = memberships.map((membership) => {
      const member = membership.user.getEntity();
      return {
        userId: member.id,
        displayName: member.displayName,
        email: member.email,
        specialty: membership.specialty,
        roles: [...member.roles],
      };
    });
    response.json(members);
  });

  return router;
}
