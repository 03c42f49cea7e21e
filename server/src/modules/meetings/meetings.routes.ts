import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import {
  addAgendaItemSchema,
  createMeetingSchema,
  moveAgendaItemSchema,
  orderAgendaSchema,
} from '@emberline/shared';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import type { BoardRoom } from '../board-session/board-room';
import { MeetingService } from './meeting.service';

/**
 * Meeting routes, mounted at /api:
 *   GET  /boards/:id/meetings           the board's meetings, oldest first (members, administrators)
 *   POST /boards/:id/meetings           CreateMeeting → 201 MeetingView
 *   GET  /meetings                      the meetings of the user's boards, oldest first
 *   GET  /meetings/:id                  MeetingView, agenda in order
 *   POST /meetings/:id/agenda           { caseId } → 201 MeetingView (the case becomes on agenda)
 *   PUT  /meetings/:id/agenda/order     { itemIds } → MeetingView (the chair)
 *   POST /agenda-items/:id/move         { meetingId } → MeetingView of the target (the chair)
 */
export function meetingRoutes(orm: MikroORM, room: BoardRoom): Router {
  const router = Router();
  const meetings = () => new MeetingService(orm.em);
  const meetingId = (value: unknown) => pathId(value, 'The meeting');

  router.get('/boards/:id/meetings', requireSignIn, async (request, response) => {
    response.json(
      await meetings().listForBoard(signedInUser(request), pathId(request.params.id, 'The board')),
    );
  });
  router.post('/boards/:id/meetings', requireSignIn, async (request, response) => {
    const body = parse(createMeetingSchema, request.body);
    const created = await meetings().schedule(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The board'),
      body,
    );
    response.status(201).location(`/api/meetings/${created.id}`).json(created);
  });
  router.get('/meetings', requireSignIn, async (request, response) => {
    response.json(await meetings().listMine(signedInUser(request)));
  });
  router.get('/meetings/:id', requireSignIn, async (request, response) => {
    response.json(await meetings().get(signedInUser(request), meetingId(request.params.id)));
  });
  router.post('/meetings/:id/agenda', requireSignIn, async (request, response) => {
    const { caseId } = parse(addAgendaItemSchema, request.body);
    const added = await meetings().addToAgenda(
      signedInUser(request),
      actorOf(request),
      meetingId(request.params.id),
      caseId,
    );
    room.toMeeting(added.id).emit('agenda:changed', { meetingId: added.id, reason: 'order' });
    response.status(201).json(added);
  });
  router.put('/meetings/:id/agenda/order', requireSignIn, async (request, response) => {
    const { itemIds } = parse(orderAgendaSchema, request.body);
    response.json(
      await meetings().order(
        signedInUser(request),
        actorOf(request),
        meetingId(request.params.id),
        itemIds,
      ),
    );
    room.toMeeting(request.params.id as string).emit('agenda:changed', {
      meetingId: request.params.id as string,
      reason: 'order',
    });
  });
  router.post('/agenda-items/:id/move', requireSignIn, async (request, response) => {
    const { meetingId: target } = parse(moveAgendaItemSchema, request.body);
    const moved = await meetings().move(
      signedInUser(request),
      actorOf(request),
      pathId(request.params.id, 'The agenda item'),
      target,
    );
    // Both agendas changed: the one the item left (named in the answer's audit) and the target.
    for (const id of [moved.movedFrom, target]) {
      room.toMeeting(id).emit('agenda:changed', { meetingId: id, reason: 'order' });
    }
    response.json(moved.view);
  });
  return router;
}
