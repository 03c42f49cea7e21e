import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { TestProject } from 'vitest/node';
import {
  connectionUrl,
  dropDatabase,
  ensureDatabase,
  startPostgres,
} from '../../server/scripts/postgres.mjs';

const root = fileURLToPath(new URL('../..', import.meta.url));

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      server.close(() =>
        typeof address === 'object' && address
          ? resolve(address.port)
          : reject(new Error('no port')),
      );
    });
  });
}

async function waitForHttp(url: string, timeoutMs = 60_000): Promise<void> {
  const started = Date.now();
  for (;;) {
    try {
      if ((await fetch(url)).ok) return;
    } catch {
      // not up yet
    }
    if (Date.now() - started > timeoutMs)
      throw new Error(`${url} did not answer within ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
}

/**
 * A database of its own, migrated and seeded with the demo; the local fake identity provider;
 * the server serving the built client (`ng build` runs before this suite) on a free port.
 */
export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const state = startPostgres();
  const database = `emberline_e2e_${process.pid}`;
  await dropDatabase(database, state);
  await ensureDatabase(database, state);
  const databaseUrl = connectionUrl(database, state);
  const env = { ...process.env, DATABASE_URL: databaseUrl };
  for (const tool of ['migrate', 'seed']) {
    const result = spawnSync(process.execPath, ['--import', 'tsx', `server/src/tools/${tool}.ts`], {
      cwd: root,
      env,
      encoding: 'utf8',
    });
    if (result.status !== 0) throw new Error(`${tool} failed: ${result.stderr}`);
  }
  const port = await freePort();
  const idpPort = await freePort();
  // A mail catcher of its own: the demo's default port may be another server's on this machine.
  const mailCatcherPort = await freePort();
  const baseUrl = `http://127.0.0.1:${port}`;
  const idpDataDir = mkdtempSync(join(tmpdir(), 'emberline-e2e-idp-'));
  const children: ChildProcess[] = [];
  const logs: string[] = [];
  const launch = (args: string[], extraEnv: Record<string, string>) => {
    const child = spawn(process.execPath, ['--import', 'tsx', ...args], {
      cwd: root,
      env: { ...env, ...extraEnv },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    child.stdout?.on('data', (chunk: Buffer) => logs.push(chunk.toString()));
    child.stderr?.on('data', (chunk: Buffer) => logs.push(chunk.toString()));
    children.push(child);
  };
  try {
    launch(['test/support/fake-idp/main.ts'], {
      FAKE_IDP_PORT: String(idpPort),
      FAKE_IDP_DIR: idpDataDir,
      SP_ACS_URL: `${baseUrl}/api/auth/saml/callback`,
      SP_ENTITY_ID: `${baseUrl}/api/auth/saml/metadata`,
    });
    // The server reads the identity provider's certificate at start: the IdP comes first.
    await waitForHttp(`http://127.0.0.1:${idpPort}/health`);
    launch(['server/src/main.ts'], {
      PORT: String(port),
      PUBLIC_URL: baseUrl,
      CLIENT_DIST: join(root, 'dist/emberline/browser'),
      FAKE_IDP_DIR: idpDataDir,
      MAIL_CATCHER_PORT: String(mailCatcherPort),
    });
    await waitForHttp(`${baseUrl}/api/health`);
  } catch (error) {
    // Leave nothing running behind a failed start.
    for (const child of children) child.kill('SIGTERM');
    await dropDatabase(database, state);
    throw new Error(`${String(error)}\n${logs.join('')}`);
  }
  project.provide('baseUrl', baseUrl);
  project.provide('idpUrl', `http://127.0.0.1:${idpPort}`);
  return async () => {
    for (const child of children) child.kill('SIGTERM');
    await new Promise((resolve) => setTimeout(resolve, 300));
    await dropDatabase(database, state);
    rmSync(idpDataDir, { recursive: true, force: true });
  };
}

declare module 'vitest' {
  export interface ProvidedContext {
    baseUrl: string;
    idpUrl: string;
  }
}
