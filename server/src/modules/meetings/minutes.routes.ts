import { Router, type Response } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { pathId } from '../../common/validate';
import type { BoardRoom } from '../board-session/board-room';
import { MinutesService, minutesBody, type StoredMinutes } from './minutes.service';

/**
 * Closing a meeting and its minutes, mounted at /api (module README):
 *   POST /meetings/:id/close     → MinutesView (the meeting's chair; 409 once closed)
 *   GET  /meetings/:id/minutes   → MinutesView (members of the board, administrators; 404 until
 *                                  the meeting is closed), the same bytes on every read
 */
export function minutesRoutes(orm: MikroORM, room: BoardRoom): Router {
  const router = Router();
  const minutes = () => new MinutesService(orm.em, room);
  const meetingId = (value: unknown) => pathId(value, 'The meeting');

  router.post('/meetings/:id/close', requireSignIn, async (request, response) => {
    send(
      response,
      await minutes().close(signedInUser(request), actorOf(request), meetingId(request.params.id)),
    );
  });

  router.get('/meetings/:id/minutes', requireSignIn, async (request, response) => {
    send(
      response,
      await minutes().read(signedInUser(request), actorOf(request), meetingId(request.params.id)),
    );
  });

  return router;
}

/**
 * Sent as text, not through `response.json`: the stored content is never parsed and written
 * again, so what the reader gets cannot drift from what was hashed when the meeting closed.
 */
function send(response: Response, stored: StoredMinutes): void {
  response.type('application/json').send(minutesBody(stored));
}
