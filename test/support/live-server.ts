/**
 * The real application listening on a loopback port with its realtime server (the `/session`
 * namespace and every board-session feature), for tests that speak Socket.IO the way the browser
 * does: signed in over HTTP, the session cookie on the socket's handshake, the app's Origin.
 */
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import pg from 'pg';
import { io as connectSocket, type Socket } from 'socket.io-client';
import { expect, inject } from 'vitest';
import type {
  ClientToServerEvents,
  ServerToClientEvents,
  SessionAck,
  SessionClientEvents,
  SessionServerEvents,
} from '@emberline/shared';
import { createApp } from '../../server/src/app';
import { BoardRoom } from '../../server/src/modules/board-session/board-room';
import { boardSessionFeatures } from '../../server/src/modules/board-session/board-session';
import { sessionMiddleware } from '../../server/src/modules/auth/session';
import { createRealtimeServer, type EmberlineServer } from '../../server/src/realtime/io';
import { demoPassword } from './demo';
import { ApiClient, sessionCookieOf, startTestApp, type TestApp } from './test-app';

export { sessionCookieOf };

export type SessionClientSocket = Socket<SessionServerEvents, SessionClientEvents>;
export type DefaultClientSocket = Socket<ServerToClientEvents, ClientToServerEvents>;

export interface LiveServer {
  testApp: TestApp;
  url: string;
  room: BoardRoom;
  io: EmberlineServer;
  /** Signs in over HTTP (the API client keeps the cookies) and answers the client. */
  signIn(email: string): Promise<ApiClient>;
  /** A `/session` socket for a signed-in client; `options` go to socket.io-client. */
  sessionSocket(
    client: ApiClient,
    options?: Parameters<typeof connectSocket>[1],
  ): SessionClientSocket;
  close(): Promise<void>;
}

export async function startLiveServer(
  options: {
    testApp?: TestApp;
    adapter?: Parameters<typeof createRealtimeServer>[1]['adapter'];
  } = {},
): Promise<LiveServer> {
  const testApp = options.testApp ?? (await startTestApp());
  const sessionPool = new pg.Pool({ connectionString: inject('databaseUrl'), max: 4 });
  const session = sessionMiddleware(testApp.config, sessionPool);
  const room = new BoardRoom();
  const log = (message: string, error?: unknown) =>
    testApp.logs.push(`${message} ${error instanceof Error ? error.stack : String(error ?? '')}`);
  const app = createApp({
    orm: testApp.orm,
    sessionPool,
    config: testApp.config,
    log,
    session,
    boardRoom: room,
  });
  const server: Server = createServer(app);
  const features = boardSessionFeatures(testApp.orm);
  const io = createRealtimeServer(
    server,
    {
      orm: testApp.orm,
      config: testApp.config,
      session,
      boardRoom: room,
      log,
      adapter: options.adapter,
    },
    [],
    features.features,
  );
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const sockets: SessionClientSocket[] = [];
  return {
    testApp,
    url,
    room,
    io,
    async signIn(email) {
      const client = new ApiClient(app);
      expect((await client.signIn(email, demoPassword)).status).toBe(200);
      return client;
    },
    sessionSocket(client, socketOptions) {
      const socket: SessionClientSocket = connectSocket(`${url}/session`, {
        path: '/socket.io',
        transports: ['websocket'],
        extraHeaders: { Cookie: sessionCookieOf(client), Origin: testApp.config.publicUrl },
        reconnection: false,
        ...socketOptions,
      });
      sockets.push(socket);
      return socket;
    },
    async close() {
      for (const socket of sockets) socket.close();
      await io.close();
      await features.close();
      await sessionPool.end();
      if (!options.testApp) await testApp.close();
    },
  };
}

/** Emits a session event and waits for its acknowledgement. */
export function ask<T>(
  socket: SessionClientSocket,
  event: keyof SessionClientEvents,
  payload: unknown,
  timeoutMs = 10_000,
): Promise<SessionAck<T>> {
  return (
    socket.timeout(timeoutMs) as unknown as {
      emitWithAck(event: string, payload: unknown): Promise<SessionAck<T>>;
    }
  ).emitWithAck(event, payload);
}

/** Resolves with the next `event` on the socket that satisfies `accept`. */
export function nextEvent<T>(
  socket: SessionClientSocket,
  event: keyof SessionServerEvents,
  accept: (payload: T) => boolean = () => true,
  timeoutMs = 10_000,
): Promise<T> {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => {
      off();
      reject(new Error(`timed out waiting for ${event}`));
    }, timeoutMs);
    const listener = (payload: T) => {
      if (!accept(payload)) return;
      off();
      resolve(payload);
    };
    const off = () => {
      clearTimeout(timer);
      (socket.off as (name: string, listener: (payload: T) => void) => void)(event, listener);
    };
    (socket.on as (name: string, listener: (payload: T) => void) => void)(event, listener);
  });
}

/** Waits until the socket is connected (or refused). */
export function connected(socket: SessionClientSocket, timeoutMs = 10_000): Promise<void> {
  if (socket.connected) return Promise.resolve();
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error('timed out connecting')), timeoutMs);
    socket.once('connect', () => {
      clearTimeout(timer);
      resolve();
    });
    socket.once('connect_error', (error) => {
      clearTimeout(timer);
      reject(error);
    });
  });
}
