import { z } from 'zod';
import type { MikroORM } from '@mikro-orm/postgresql';
import { castVoteSchema, postCommentSchema } from '@emberline/shared';
import type { Actor, SignedInUser } from '../../common/request-context';
import { onSessionEvent, type SessionFeature } from '../board-session/session-events';
import { CommentService } from './comment.service';
import { VoteService } from './vote.service';

const castSchema = z.strictObject({ agendaItemId: z.uuid(), vote: castVoteSchema });
const postSchema = z.strictObject({ agendaItemId: z.uuid(), comment: postCommentSchema });

/**
 * `vote:cast` and `comment:post` on the `/session` namespace: the same services as the HTTP
 * routes, so the same rules and the same broadcasts. The socket need not have joined the item's
 * meeting; the service decides who may vote or comment.
 */
export function voteSessionFeature(orm: MikroORM): SessionFeature {
  return (socket, context) => {
    const actor = (user: SignedInUser): Actor => ({
      id: user.id,
      email: user.email,
      ip: socket.handshake.address || null,
    });
    onSessionEvent(socket, context, 'vote:cast', castSchema, (payload, user) =>
      // A fork per event: a socket has no request context.
      new VoteService(orm.em.fork(), context.room).cast(
        user,
        actor(user),
        payload.agendaItemId,
        payload.vote,
      ),
    );
    onSessionEvent(socket, context, 'comment:post', postSchema, (payload, user) =>
      new CommentService(orm.em.fork(), context.room).post(
        user,
        actor(user),
        payload.agendaItemId,
        payload.comment,
      ),
    );
  };
}
