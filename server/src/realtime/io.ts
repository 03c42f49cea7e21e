/**
 * Socket.IO on the HTTP server. A socket is authenticated from the same session cookie as the
 * HTTP API (express-session runs on the handshake request) and refused without a signed-in,
 * active user; every event is then authorised on its own (DEVELOPERS.md, "A feature, end to
 * end").
 */
import type { Server as HttpServer } from 'node:http';
import type { RequestHandler, Request } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { Server, type Socket } from 'socket.io';
import type { ClientToServerEvents, ServerToClientEvents } from '@emberline/shared';
import type { AppConfig } from '../config';
import type { SignedInUser } from '../common/request-context';
import { loadSignedInUser } from '../modules/users/user.service';

export interface SocketData {
  userId: string;
  signInMethod: 'local' | 'saml';
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

export function createRealtimeServer(
  httpServer: HttpServer,
  services: { orm: MikroORM; config: AppConfig; session: RequestHandler },
  features: SocketFeature[],
): EmberlineServer {
  const io: EmberlineServer = new Server(httpServer, {
    path: '/socket.io',
    serveClient: false,
    // Same origin only: the app and its socket are served from one address.
    cors: { origin: services.config.publicUrl, credentials: true },
    connectionStateRecovery: { maxDisconnectionDuration: 2 * 60_000 },
  });
  io.engine.use(services.session);
  io.use((socket, next) => {
    const session = (socket.request as Request).session;
    const signedInAt = session?.signedInAt ?? 0;
    const isLive =
      Boolean(session?.userId) &&
      Date.now() - signedInAt <= services.config.sessionAbsoluteLifetimeMs;
    if (!isLive || !session.userId || !session.signInMethod) {
      next(new Error('Sign in first.'));
      return;
    }
    socket.data.userId = session.userId;
    socket.data.signInMethod = session.signInMethod;
    next();
  });
  io.on('connection', (socket) => {
    // Each event re-reads the user, so a disabled account or a lost membership takes effect
    // at once, not at the next connection.
    const currentUser = () =>
      loadSignedInUser(services.orm.em.fork(), socket.data.userId, socket.data.signInMethod);
    for (const feature of features) feature(socket, currentUser);
  });
  return io;
}
