/**
 * One way to handle every `/session` event: the payload is validated (the same `parse` as the HTTP API), the user re-read (a
 * deactivated account or a lost membership counts at once), the handler's answer or its error
 * acknowledged as `{ ok: true, data }` or `{ ok: false, problem }`, the problem made by the
 * same function as the HTTP API's error answers.
 */
import type { Socket } from 'socket.io';
import type { z } from 'zod';
import type { SessionAck, SessionClientEvents, SessionServerEvents } from '@emberline/shared';
import { problemFrom } from '../../common/error-middleware';
import { UnauthenticatedError } from '../../common/errors';
import { parse } from '../../common/validate';
import type { SignedInUser } from '../../common/request-context';
import type { BoardRoom, SessionSocketData } from './board-room';

export type SessionSocket = Socket<
  SessionClientEvents,
  SessionServerEvents,
  Record<string, never>,
  SessionSocketData
>;

export interface SessionContext {
  /** Re-reads the socket's user from the database; null once deactivated. */
  currentUser: () => Promise<SignedInUser | null>;
  room: BoardRoom;
  log: (message: string, error?: unknown) => void;
}

/** Registers a feature's events on each new `/session` socket. */
export type SessionFeature = (socket: SessionSocket, context: SessionContext) => void;

/**
 * `socket.on(event, …)` with validation, authentication and the one acknowledgement shape.
 * An event sent without an acknowledgement callback is ignored: every session event answers.
 */
export function onSessionEvent<Schema extends z.ZodType, Result>(
  socket: SessionSocket,
  context: SessionContext,
  event: keyof SessionClientEvents,
  schema: Schema,
  handler: (payload: z.infer<Schema>, user: SignedInUser) => Promise<Result>,
  options: {
    /**
     * `fresh` (the default) re-reads the user for each event. `recent` reuses a reading up to
     * a second old: for the lead's view updates at 20 a second, where a lost account or
     * membership is enforced by closing the user's sockets at once instead.
     */
    user?: 'fresh' | 'recent';
  } = {},
): void {
  // The reading itself is kept, so that events arriving while it runs share it instead of each
  // starting one (a slow database would otherwise be asked more, the slower it is).
  let recent: { user: Promise<SignedInUser | null>; at: number } | null = null;
  const readUser = (): Promise<SignedInUser | null> => {
    if (options.user === 'recent' && recent && Date.now() - recent.at < 1000) return recent.user;
    const entry = { user: context.currentUser(), at: Date.now() };
    recent = entry;
    entry.user.catch(() => {
      if (recent === entry) recent = null;
    });
    return entry.user;
  };
  const listener = async (payload: unknown, acknowledge: unknown) => {
    if (typeof acknowledge !== 'function') return;
    const answer = acknowledge as (result: SessionAck<Result>) => void;
    try {
      const body = parse(schema, payload);
      // Inside the try: a database error while reading the user is answered, not left as an
      // unhandled rejection.
      const user = await readUser();
      if (!user) {
        answer({ ok: false, problem: problemFrom(new UnauthenticatedError(), context.log) });
        socket.disconnect(true);
        return;
      }
      answer({ ok: true, data: await handler(body, user) });
    } catch (error) {
      answer({ ok: false, problem: problemFrom(error, context.log) });
    }
  };
  (socket.on as (name: string, listener: (...args: unknown[]) => void) => void)(
    event,
    (payload: unknown, acknowledge: unknown) => void listener(payload, acknowledge),
  );
}
