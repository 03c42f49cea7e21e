import type { Request } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { z } from 'zod';
import { recordDecisionSchema } from '@emberline/shared';
import {
  onSessionEvent,
  type SessionFeature,
  type SessionSocket,
} from '../board-session/session-events';
import { DecisionService } from './decision.service';

const recordPayloadSchema = z.strictObject({
  caseId: z.uuid(),
  decision: recordDecisionSchema,
});

/**
 * `decision:record` over the `/session` namespace: the same rules, transaction and broadcasts
 * as POST /api/cases/:id/decision, acknowledged with the `DecisionView` or the problem.
 */
export function decisionSessionFeature(orm: MikroORM): SessionFeature {
  return (socket, context) => {
    onSessionEvent(
      socket,
      context,
      'decision:record',
      recordPayloadSchema,
      async (payload, user) => {
        const service = new DecisionService(orm.em.fork(), context.room);
        return service.record(
          user,
          { id: user.id, email: user.email, ip: socket.handshake.address || null },
          payload.caseId,
          payload.decision,
          { password: payload.decision.password, signedInAt: await signedInAtOf(socket) },
        );
      },
    );
  };
}

/**
 * When the socket's browser session signed in, read again from the session store: the copy
 * taken at the handshake is as old as the socket, and a fresh single sign-on since then (or a
 * sign-out) must count. Undefined when the session is gone or belongs to someone else.
 */
async function signedInAtOf(socket: SessionSocket): Promise<number | undefined> {
  const request = socket.request as Request;
  if (!request.session) return undefined;
  const isReloaded = await new Promise<boolean>((resolve) =>
    request.session.reload((error: unknown) => resolve(!error)),
  );
  // `reload` puts a new session object on the request.
  const session = request.session;
  if (!isReloaded || session.userId !== socket.data.userId) return undefined;
  return session.signedInAt;
}
