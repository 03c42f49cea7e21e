/**
 * Socket.IO on the HTTP server. A socket is authenticated from the same session cookie as the
 * HTTP API (express-session runs on the handshake request) and refused without a signed-in,
 * active user; every event is then authorised on its own (DEVELOPERS.md, "A feature, end to
 * end").
 */
import type { Server as HttpServer } from 'node:http';
import type { RequestHandler, Request } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { Server, type ServerOptions, type Socket } from 'socket.io';
import type { ClientToServerEvents, ServerToClientEvents } from '@emberline/shared';
import type { AppConfig } from '../config';
import type { SignedInUser } from '../common/request-context';
import { loadSignedInUser } from '../modules/users/user.service';
import {
  httpSessionRoom,
  userRoom,
  type BoardRoom,
  type SessionNamespace,
} from '../modules/board-session/board-room';
import type { SessionContext, SessionFeature } from '../modules/board-session/session-events';

export interface SocketData {
  userId: string;
  signInMethod: 'local' | 'saml';
  httpSessionId: string;
}

export type EmberlineServer = Server<
  ClientToServerEvents,
  ServerToClientEvents,
  Record<string, never>,
  SocketData
>;
export type EmberlineSocket = Socket<
  ClientToServerEvents,
  ServerToClientEvents,
  Record<string, never>,
  SocketData
>;

/** Registers a feature's events on each new socket. */
export type SocketFeature = (
  socket: EmberlineSocket,
  currentUser: () => Promise<SignedInUser | null>,
) => void;

export interface RealtimeServices {
  orm: MikroORM;
  config: AppConfig;
  session: RequestHandler;
  /** The board session's rooms, shared with the HTTP app. */
  boardRoom: BoardRoom;
  log: (message: string, error?: unknown) => void;
  /** Shares rooms and broadcasts with other server processes (the Postgres adapter). */
  adapter?: ServerOptions['adapter'];
}

/**
 * The origins a socket may come from: the app's public address (and, on loopback, the same port
 * under the other loopback name). A browser always sends Origin on a WebSocket upgrade and on a
 * cross-origin request; a same-origin polling GET may omit it, and then Sec-Fetch-Site says
 * where it came from.
 */
export function allowedOrigins(publicUrl: string): Set<string> {
  const url = new URL(publicUrl);
  const origins = new Set([url.origin]);
  const aliases: Record<string, string> = { '127.0.0.1': 'localhost', localhost: '127.0.0.1' };
  const alias = aliases[url.hostname];
  if (alias) origins.add(`${url.protocol}//${alias}${url.port ? `:${url.port}` : ''}`);
  return origins;
}

export function isAllowedOrigin(
  headers: Record<string, string | string[] | undefined>,
  allowed: ReadonlySet<string>,
): boolean {
  const origin = headers.origin;
  if (typeof origin === 'string') return allowed.has(origin);
  return headers['sec-fetch-site'] === 'same-origin';
}

export function createRealtimeServer(
  httpServer: HttpServer,
  services: RealtimeServices,
  features: SocketFeature[],
  sessionFeatures: SessionFeature[] = [],
): EmberlineServer {
  const origins = allowedOrigins(services.config.publicUrl);
  const io: EmberlineServer = new Server(httpServer, {
    path: '/socket.io',
    serveClient: false,
    // Same origin only: the app and its socket are served from one address.
    cors: { origin: [...origins], credentials: true },
    allowRequest: (request, answer) => {
      const isAllowed = isAllowedOrigin(request.headers, origins);
      answer(isAllowed ? null : 'This origin may not open a socket.', isAllowed);
    },
    connectionStateRecovery: { maxDisconnectionDuration: 2 * 60_000 },
    ...(services.adapter ? { adapter: services.adapter } : {}),
  });
  io.engine.use(services.session);
  const authenticate = (socket: Socket, next: (error?: Error) => void) => {
    const session = (socket.request as Request).session;
    const signedInAt = session?.signedInAt ?? 0;
    const isLive =
      Boolean(session?.userId) &&
      Date.now() - signedInAt <= services.config.sessionAbsoluteLifetimeMs;
    if (!isLive || !session.userId || !session.signInMethod) {
      next(new Error('Sign in first.'));
      return;
    }
    // A recovered connection passes here again: the session is read afresh from the store.
    socket.data.userId = session.userId;
    socket.data.signInMethod = session.signInMethod;
    socket.data.httpSessionId = (socket.request as Request).sessionID;
    next();
  };
  io.use(authenticate);
  io.on('connection', (socket) => {
    // Each event re-reads the user, so a disabled account or a lost membership takes effect
    // at once, not at the next connection.
    const currentUser = () =>
      loadSignedInUser(services.orm.em.fork(), socket.data.userId, socket.data.signInMethod);
    for (const feature of features) feature(socket, currentUser);
  });

  // Its own event maps: the namespace is typed apart from the default one.
  const sessionNamespace = io.of('/session') as unknown as SessionNamespace;
  sessionNamespace.use(authenticate);
  sessionNamespace.on('connection', (socket) => {
    if (!socket.recovered) {
      socket.data.meetingId = null;
      socket.data.specialties = {};
      socket.data.displayName = '';
    }
    const context: SessionContext = {
      currentUser: () =>
        loadSignedInUser(services.orm.em.fork(), socket.data.userId, socket.data.signInMethod),
      room: services.boardRoom,
      log: services.log,
    };
    void socket.join([userRoom(socket.data.userId), httpSessionRoom(socket.data.httpSessionId)]);
    for (const feature of sessionFeatures) feature(socket, context);
  });
  services.boardRoom.attach(sessionNamespace, services.log);
  return io;
}
