/**
 * `assessment:watch` joins the room `assessment:<id>` after checking that the sender may see
 * the assessment's case; the acknowledgement carries the current state, so a client that
 * (re)connects late misses nothing. Progress events reach the room from the listener.
 */
import { z } from 'zod';
import type { MikroORM } from '@mikro-orm/postgresql';
import type { AssessmentProgressEvent } from '@emberline/shared';
import { AppError } from '../../common/errors';
import type { EmberlineServer, SocketFeature } from '../../realtime/io';
import { AssessmentService } from './assessment.service';

const watchSchema = z.strictObject({ assessmentId: z.uuid() });

export const assessmentRoom = (id: string) => `assessment:${id}`;

export function assessmentSocketFeature(
  orm: MikroORM,
  log: (message: string, error?: unknown) => void,
): SocketFeature {
  return (socket, currentUser) => {
    socket.on('assessment:watch', async (payload, acknowledge) => {
      if (typeof acknowledge !== 'function') return;
      const parsed = watchSchema.safeParse(payload);
      if (!parsed.success) {
        acknowledge({ ok: false, status: 400, detail: 'Send { assessmentId } with a uuid.' });
        return;
      }
      try {
        // Inside the try: a database error while reading the session must be answered, not
        // left as an unhandled rejection that would stop the process and its workers.
        const user = await currentUser();
        if (!user) {
          acknowledge({ ok: false, status: 401, detail: 'Sign in first.' });
          socket.disconnect(true);
          return;
        }
        const service = new AssessmentService(orm.em.fork(), null, false);
        const event = await service.progressFor(user, parsed.data.assessmentId);
        await socket.join(assessmentRoom(event.id));
        acknowledge({ ok: true, event });
      } catch (error) {
        if (!(error instanceof AppError)) log('assessment:watch failed.', error);
        const status = error instanceof AppError ? error.status : 500;
        acknowledge({
          ok: false,
          status,
          detail: error instanceof AppError ? error.message : 'The assessment could not be read.',
        });
      }
    });
    socket.on('assessment:unwatch', (payload) => {
      const parsed = watchSchema.safeParse(payload);
      if (parsed.success) void socket.leave(assessmentRoom(parsed.data.assessmentId));
    });
  };
}

/** Sends a progress event to the sockets watching that assessment. */
export function relayProgress(io: EmberlineServer) {
  return (event: AssessmentProgressEvent) => {
    io.to(assessmentRoom(event.id)).emit('assessment:progressed', event);
  };
}
