import { z } from 'zod';
import type { MikroORM } from '@mikro-orm/postgresql';
import { createAnnotationSchema, updateAnnotationSchema } from '@emberline/shared';
import type { Actor, SignedInUser } from '../../common/request-context';
import { onSessionEvent, type SessionFeature } from '../board-session/session-events';
import { AnnotationService } from './annotation.service';

const createSchema = z.strictObject({ caseId: z.uuid(), annotation: createAnnotationSchema });
const updateSchema = z.strictObject({ id: z.uuid(), changes: updateAnnotationSchema });
const deleteSchema = z.strictObject({ id: z.uuid() });

/**
 * `annotation:create|update|delete` on the `/session` namespace: the same service as the HTTP
 * routes, so the same rules, and the same broadcasts to the room of the meeting discussing the
 * case.
 */
export function annotationSessionFeature(orm: MikroORM): SessionFeature {
  return (socket, context) => {
    const actor = (user: SignedInUser): Actor => ({
      id: user.id,
      email: user.email,
      ip: socket.handshake.address || null,
    });
    // A fork per event: a socket has no request context.
    const annotations = () => new AnnotationService(orm.em.fork(), context.room);
    onSessionEvent(socket, context, 'annotation:create', createSchema, (payload, user) =>
      annotations().create(user, actor(user), payload.caseId, payload.annotation),
    );
    onSessionEvent(socket, context, 'annotation:update', updateSchema, (payload, user) =>
      annotations().update(user, actor(user), payload.id, payload.changes),
    );
    onSessionEvent(socket, context, 'annotation:delete', deleteSchema, async (payload, user) => {
      await annotations().delete(user, actor(user), payload.id);
      return null;
    });
  };
}
