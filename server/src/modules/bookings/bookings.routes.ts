import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import {
  bookingQueueQuerySchema,
  cancelBookingSchema,
  checklistOverrideSchema,
  checklistTickSchema,
  createBookingSchema,
  createFollowUpSchema,
  recordTreatmentSchema,
  updateBookingSchema,
} from '@emberline/shared';
import { actorOf, requireRole, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { parse, pathId } from '../../common/validate';
import type { MailService } from '../mail/mail.service';
import { BookingService } from './booking.service';
import { ChecklistService } from './checklist.service';
import { bookingQueue, caseLogistics } from './logistics';
import { recordTreatment } from './treatment';

export interface BookingRouteOptions {
  mail: MailService | null;
  timeZone: string;
  log: (message: string, error?: unknown) => void;
}

/**
 * Logistics routes, mounted at /api (module README):
 *   GET    /bookings/queue                        BookingQueueItem[] (nurse coordinators)
 *   GET    /cases/:id/logistics                   CaseLogisticsView (whoever sees the case)
 *   POST   /cases/:id/booking                     CreateBooking → 201 BookingView (coordinator)
 *   PATCH  /cases/:id/booking                     UpdateBooking → BookingView (coordinator)
 *   DELETE /cases/:id/booking                     CancelBooking → BookingView (coordinator)
 *   POST   /cases/:id/follow-up                   CreateFollowUp → 201 BookingView (coordinator)
 *   DELETE /cases/:id/follow-up                   CancelBooking → BookingView (coordinator)
 *   POST   /cases/:id/treatment                   RecordTreatment → 201 TreatmentView (operator)
 *   PUT    /bookings/:id/checklist/:key           { isMet } → BookingView (coordinator, operator)
 *   POST   /bookings/:id/checklist/:key/override  { reason } → BookingView (coordinator, operator)
 *   POST   /bookings/:id/confirm                  → BookingView (coordinator)
 */
export function bookingRoutes(orm: MikroORM, options: BookingRouteOptions): Router {
  const router = Router();
  const bookings = () => new BookingService(orm.em, options);
  const checklist = () => new ChecklistService(orm.em, options.mail);
  const caseId = (value: unknown) => pathId(value, 'The case');
  const bookingId = (value: unknown) => pathId(value, 'The booking');

  router.get('/bookings/queue', requireRole('nurse-coordinator'), async (request, response) => {
    const query = parse(bookingQueueQuerySchema, request.query);
    response.json(await bookingQueue(orm.em, signedInUser(request), actorOf(request), query));
  });

  router.get('/cases/:id/logistics', requireSignIn, async (request, response) => {
    response.json(
      await caseLogistics(
        orm.em,
        signedInUser(request),
        actorOf(request),
        caseId(request.params.id),
        options.mail,
      ),
    );
  });

  router.post('/cases/:id/booking', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const body = parse(createBookingSchema, request.body);
    const view = await bookings().create(signedInUser(request), actorOf(request), id, body);
    response.status(201).location(`/api/cases/${id}/logistics`).json(view);
  });

  router.patch('/cases/:id/booking', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const body = parse(updateBookingSchema, request.body);
    response.json(await bookings().update(signedInUser(request), actorOf(request), id, body));
  });

  router.delete('/cases/:id/booking', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const body = parse(cancelBookingSchema, request.body ?? {});
    response.json(
      await bookings().cancel(signedInUser(request), actorOf(request), id, 'procedure', body),
    );
  });

  router.post('/cases/:id/follow-up', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const body = parse(createFollowUpSchema, request.body);
    const view = await bookings().createFollowUp(signedInUser(request), actorOf(request), id, body);
    response.status(201).location(`/api/cases/${id}/logistics`).json(view);
  });

  router.delete('/cases/:id/follow-up', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const body = parse(cancelBookingSchema, request.body ?? {});
    response.json(
      await bookings().cancel(
        signedInUser(request),
        actorOf(request),
        id,
        'follow-up-imaging',
        body,
      ),
    );
  });

  router.post('/cases/:id/treatment', requireSignIn, async (request, response) => {
    const id = caseId(request.params.id);
    const body = parse(recordTreatmentSchema, request.body);
    const view = await recordTreatment(orm.em, signedInUser(request), actorOf(request), id, body);
    response.status(201).location(`/api/cases/${id}/logistics`).json(view);
  });

  router.put('/bookings/:id/checklist/:key', requireSignIn, async (request, response) => {
    const { isMet } = parse(checklistTickSchema, request.body);
    response.json(
      await checklist().tick(
        signedInUser(request),
        actorOf(request),
        bookingId(request.params.id),
        String(request.params.key),
        isMet,
      ),
    );
  });

  router.post('/bookings/:id/checklist/:key/override', requireSignIn, async (request, response) => {
    const { reason } = parse(checklistOverrideSchema, request.body);
    response.json(
      await checklist().override(
        signedInUser(request),
        actorOf(request),
        bookingId(request.params.id),
        String(request.params.key),
        reason,
      ),
    );
  });

  router.post('/bookings/:id/confirm', requireSignIn, async (request, response) => {
    response.json(
      await checklist().confirm(
        signedInUser(request),
        actorOf(request),
        bookingId(request.params.id),
      ),
    );
  });

  return router;
}
