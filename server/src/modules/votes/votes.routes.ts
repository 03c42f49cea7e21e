import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { castVoteSchema, markCommentSchema, postCommentSchema } from '@emberline/shared';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import type { BoardRoom } from '../board-session/board-room';
import { CommentService } from './comment.service';
import { VoteService } from './vote.service';

/**
 * Vote and comment routes, mounted at /api (module README for the rules):
 *   POST  /agenda-items/:id/votes      CastVote → TallyView with the user's own positions
 *   GET   /agenda-items/:id/tally      TallyView with the user's own positions
 *   GET   /agenda-items/:id/comments   CommentView[], oldest first
 *   POST  /agenda-items/:id/comments   PostComment → 201 CommentView
 *   PATCH /comments/:id                { isForMinutes } → CommentView (the meeting's chair)
 *   GET   /cases/:id/comments          CommentView[] of every agenda item of the case
 *   GET   /cases/:id/votes             AgendaItemVotes[], oldest meeting first
 */
export function voteRoutes(orm: MikroORM, room: BoardRoom): Router {
  const router = Router();
  const votes = () => new VoteService(orm.em, room);
  const comments = () => new CommentService(orm.em, room);
  const itemId = (value: unknown) => pathId(value, 'The agenda item');
  const caseId = (value: unknown) => pathId(value, 'The case');

  router.post('/agenda-items/:id/votes', requireSignIn, async (request, response) => {
    const body = parse(castVoteSchema, request.body);
    response.json(
      await votes().cast(signedInUser(request), actorOf(request), itemId(request.params.id), body),
    );
  });
  router.get('/agenda-items/:id/tally', requireSignIn, async (request, response) => {
    response.json(await votes().tally(signedInUser(request), itemId(request.params.id)));
  });
  router.get('/agenda-items/:id/comments', requireSignIn, async (request, response) => {
    response.json(await comments().listForItem(signedInUser(request), itemId(request.params.id)));
  });
  router.post('/agenda-items/:id/comments', requireSignIn, async (request, response) => {
    const body = parse(postCommentSchema, request.body);
    response
      .status(201)
      .json(
        await comments().post(
          signedInUser(request),
          actorOf(request),
          itemId(request.params.id),
          body,
        ),
      );
  });
  router.patch('/comments/:id', requireSignIn, async (request, response) => {
    const { isForMinutes } = parse(markCommentSchema, request.body);
    response.json(
      await comments().mark(
        signedInUser(request),
        actorOf(request),
        pathId(request.params.id, 'The comment'),
        isForMinutes,
      ),
    );
  });
  router.get('/cases/:id/comments', requireSignIn, async (request, response) => {
    response.json(await comments().listForCase(signedInUser(request), caseId(request.params.id)));
  });
  router.get('/cases/:id/votes', requireSignIn, async (request, response) => {
    response.json(await votes().listForCase(signedInUser(request), caseId(request.params.id)));
  });
  return router;
}
