import type { TestProject } from 'vitest/node';
import {
  dropDatabase,
  ensureDatabase,
  startPostgres,
  connectionUrl,
} from '../../server/scripts/postgres.mjs';

/**
 * Starts the project's PostgreSQL (installing it when missing) and gives the run a database of
 * its own, built from the migrations by the tests that need it, and dropped afterwards.
 */
export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const state = startPostgres();
  const name = `emberline_test_${process.pid}`;
  await dropDatabase(name, state);
  await ensureDatabase(name, state);
  const url = connectionUrl(name, state);
  project.provide('databaseUrl', url);
  return async () => {
    await dropDatabase(name, state);
  };
}

declare module 'vitest' {
  export interface ProvidedContext {
    databaseUrl: string;
  }
}
