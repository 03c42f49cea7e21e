/**
 * The board session's socket features and, when several server processes share the rooms, the
 * Postgres adapter (`SOCKET_ADAPTER=postgres`).
 */
import pg from 'pg';
import type { MikroORM } from '@mikro-orm/postgresql';
import { createAdapter } from '@socket.io/postgres-adapter';
import type { ServerOptions } from 'socket.io';
import { annotationSessionFeature } from '../annotations/annotations.socket';
import { decisionSessionFeature } from '../decisions/decisions.socket';
import { voteSessionFeature } from '../votes/votes.socket';
import type { SessionFeature } from './session-events';
import { sessionFeature } from './session.socket';

/** Payloads above 8000 bytes (NOTIFY's limit) travel through this table, in its own schema. */
const attachmentsTable = 'socket_io.attachments';

/**
 * The adapter that shares rooms, broadcasts and presence between server processes through
 * PostgreSQL's LISTEN/NOTIFY; null when one process serves everything (the default), where
 * Socket.IO's connection-state recovery can replay missed events. Across processes a client
 * that reconnects resyncs from the database instead.
 */
export async function boardSessionAdapter(
  connectionString: string,
  log: (message: string, error?: unknown) => void,
  environment: NodeJS.ProcessEnv = process.env,
): Promise<{ adapter: ServerOptions['adapter']; close(): Promise<void> } | null> {
  if (environment.SOCKET_ADAPTER !== 'postgres') return null;
  const pool = new pg.Pool({ connectionString, max: 4 });
  await pool.query('create schema if not exists socket_io');
  await pool.query(
    `create table if not exists ${attachmentsTable} (id bigserial unique, created_at timestamptz default now(), payload bytea)`,
  );
  const adapter = createAdapter(pool, {
    tableName: attachmentsTable,
    errorHandler: (error) => log('The socket adapter failed.', error),
  }) as ServerOptions['adapter'];
  return { adapter, close: () => pool.end() };
}

/** Every feature of the `/session` namespace. */
export function boardSessionFeatures(orm: MikroORM): {
  features: SessionFeature[];
  close(): Promise<void>;
} {
  const session = sessionFeature(orm);
  return {
    features: [
      session.feature,
      voteSessionFeature(orm),
      annotationSessionFeature(orm),
      decisionSessionFeature(orm),
    ],
    close: () => session.close(),
  };
}
