import { execFile } from 'node:child_process';
import {
  chmodSync,
  copyFileSync,
  cpSync,
  existsSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  readdirSync,
  rmSync,
  symlinkSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';

/**
 * Two checkouts of the repository on one machine, started as `npm test` starts them
 * (server/scripts/postgres.mjs start: the cluster, then the `emberline` database).
 *
 * Reproduces a crash seen in a second clone run as root below a mode-700 folder: the postgres
 * user could not reach the clone's .data/, the script fell back to one temporary folder shared by
 * every checkout, found the other checkout's cluster there, and died with a TypeError. Both
 * copies here are forced to that fallback (EMBERLINE_PG_USE_TMPDIR=1) and share one TMPDIR, and
 * the project's own cluster (started by this suite's global set-up) may hold the default port.
 */

const repoRoot = fileURLToPath(new URL('../..', import.meta.url));
const scriptsDir = join(repoRoot, 'server', 'scripts');

interface ClusterState {
  port: number;
  dataDir: string;
  password: string;
  user: string;
}

interface ScriptResult {
  code: number;
  stdout: string;
  stderr: string;
}

const base = mkdtempSync(join(tmpdir(), 'emberline-two-checkouts-'));
/** Where the copies live: mode 700, like the home folder of the crash. */
const home = join(base, 'home');
/** TMPDIR of both copies, so that they share a fallback folder as the crashed clone did. */
const sharedTmp = join(base, 'tmp');
const checkoutA = join(home, 'a');
const checkoutB = join(home, 'b');
const checkoutCopy = join(home, 'copy-of-a');

function makeCheckout(dir: string): void {
  mkdirSync(join(dir, 'server', 'scripts'), { recursive: true });
  // postgres.mjs and the postgres-*.mjs files it imports; it finds its checkout as ../.. of itself.
  for (const name of readdirSync(scriptsDir).filter((n) => /^postgres.*\.mjs$/.test(n))) {
    copyFileSync(join(scriptsDir, name), join(dir, 'server', 'scripts', name));
  }
  symlinkSync(join(repoRoot, 'node_modules'), join(dir, 'node_modules'));
}

function childEnv(extra: Record<string, string>): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    EMBERLINE_PG_USE_TMPDIR: '1',
    TMPDIR: sharedTmp,
  };
  delete env.EMBERLINE_PG_PORT;
  delete env.DATABASE_URL;
  return { ...env, ...extra };
}

function runScript(
  checkout: string,
  args: string[],
  extraEnv: Record<string, string> = {},
): Promise<ScriptResult> {
  const script = join(checkout, 'server', 'scripts', 'postgres.mjs');
  return new Promise((resolve) => {
    execFile(
      process.execPath,
      [script, ...args],
      { cwd: checkout, env: childEnv(extraEnv), encoding: 'utf8', timeout: 90_000 },
      (error, stdout, stderr) => {
        const code = error ? (typeof error.code === 'number' ? error.code : 1) : 0;
        resolve({ code, stdout, stderr });
      },
    );
  });
}

function readState(checkout: string): ClusterState {
  return JSON.parse(readFileSync(join(checkout, '.data', 'postgres.json'), 'utf8')) as ClusterState;
}

function markerCheckout(dataDir: string): string {
  const marker = JSON.parse(readFileSync(join(dataDir, 'emberline-checkout.json'), 'utf8'));
  return (marker as { checkout: string }).checkout;
}

/** `select 1` and the server's own data folder and port, through the checkout's `url`. */
async function queryCluster(connectionString: string): Promise<Record<string, unknown>> {
  const client = new pg.Client({ connectionString });
  await client.connect();
  try {
    const result = await client.query(
      "select 1 as one, current_setting('data_directory') as dir, current_setting('port') as port",
    );
    return result.rows[0] as Record<string, unknown>;
  } finally {
    await client.end();
  }
}

async function queryCheckout(checkout: string): Promise<Record<string, unknown>> {
  const url = await runScript(checkout, ['url']);
  expect(url.code, url.stderr).toBe(0);
  return queryCluster(url.stdout.trim());
}

function isAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}

/**
 * Stops every postmaster whose data folder lies in this test's folders, even when the script
 * failed half-way: the first line of postmaster.pid is the postmaster's PID and SIGINT asks for
 * a fast shutdown (PostgreSQL documentation, "Database File Layout" and "Shutting Down the
 * Server"). Never touches the project's own cluster, which lives elsewhere.
 */
async function stopLeftoverPostmasters(): Promise<void> {
  const folders = [
    ...(existsSync(sharedTmp) ? readdirSync(sharedTmp).map((n) => join(sharedTmp, n)) : []),
    ...[checkoutA, checkoutB, checkoutCopy].map((c) => join(c, '.data', 'pg')),
  ];
  for (const folder of folders) {
    const pidFile = join(folder, 'postmaster.pid');
    if (!existsSync(pidFile)) continue;
    const pid = Number(readFileSync(pidFile, 'utf8').split('\n')[0]);
    if (!Number.isInteger(pid) || pid <= 0 || !isAlive(pid)) continue;
    process.kill(pid, 'SIGINT');
    for (let waitedMs = 0; isAlive(pid) && waitedMs < 15_000; waitedMs += 100) {
      await new Promise((r) => setTimeout(r, 100));
    }
  }
}

describe('postgres.mjs in two checkouts on one machine', () => {
  beforeAll(() => {
    // Traversable by the postgres user (root runs initdb as postgres), but the copies' home is not.
    chmodSync(base, 0o711);
    mkdirSync(home, { mode: 0o700 });
    mkdirSync(sharedTmp);
    chmodSync(sharedTmp, 0o1777);
    makeCheckout(checkoutA);
    makeCheckout(checkoutB);
  });

  afterAll(async () => {
    for (const checkout of [checkoutA, checkoutB, checkoutCopy]) {
      if (existsSync(join(checkout, '.data', 'postgres.json'))) await runScript(checkout, ['stop']);
    }
    await stopLeftoverPostmasters();
    rmSync(base, { recursive: true, force: true });
  }, 60_000);

  it('starts both side by side in the shared fallback, each on its own port and folder', async () => {
    const [startA, startB] = await Promise.all([
      runScript(checkoutA, ['start']),
      runScript(checkoutB, ['start']),
    ]);
    // The crash: a TypeError from a null state; every failure must now be a plain message.
    expect(startA.stderr + startB.stderr).not.toContain('TypeError');
    expect(startA.code, startA.stderr).toBe(0);
    expect(startB.code, startB.stderr).toBe(0);

    const stateA = readState(checkoutA);
    const stateB = readState(checkoutB);
    expect(stateA.port).not.toBe(stateB.port);
    expect(stateA.dataDir).not.toBe(stateB.dataDir);
    for (const [checkout, state, start] of [
      [checkoutA, stateA, startA],
      [checkoutB, stateB, startB],
    ] as const) {
      expect(state.dataDir.startsWith(sharedTmp + '/')).toBe(true);
      expect(start.stderr).toContain(`ready on 127.0.0.1:${state.port} `);
      expect(markerCheckout(state.dataDir)).toBe(checkout);
      // Each connection string reaches that checkout's own server, not a neighbour on its port.
      expect(await queryCheckout(checkout)).toEqual({
        one: 1,
        dir: state.dataDir,
        port: String(state.port),
      });
    }

    const project = await queryCluster(inject('databaseUrl'));
    expect(project['one']).toBe(1);
    expect([stateA.dataDir, stateB.dataDir]).not.toContain(project['dir']);
  }, 90_000);

  it('adopts its own cluster again when its state file is lost', async () => {
    const before = readState(checkoutB);
    rmSync(join(checkoutB, '.data', 'postgres.json'));
    const start = await runScript(checkoutB, ['start']);
    expect(start.code, start.stderr).toBe(0);
    expect(start.stderr).toContain('adopting');
    expect(readState(checkoutB)).toEqual(before);
    expect((await queryCheckout(checkoutB))['dir']).toBe(before.dataDir);
  });

  it('leaves the original cluster to a copied checkout and names EMBERLINE_PG_PORT when taken', async () => {
    const stateA = readState(checkoutA);
    const stateB = readState(checkoutB);
    // A copy made with its .data/ still names the original's cluster in its state file.
    cpSync(checkoutA, checkoutCopy, { recursive: true, verbatimSymlinks: true });
    const start = await runScript(checkoutCopy, ['start'], {
      EMBERLINE_PG_PORT: String(stateB.port),
    });
    expect(start.code).toBe(1);
    expect(start.stderr).not.toContain('TypeError');
    expect(start.stderr).toContain(`belongs to the checkout ${checkoutA}; leaving it alone`);
    expect(start.stderr).toContain(`EMBERLINE_PG_PORT=${stateB.port} asks for 127.0.0.1:`);
    expect(start.stderr).toContain('Set EMBERLINE_PG_PORT to a free port');
    expect(markerCheckout(stateA.dataDir)).toBe(checkoutA);
    expect((await queryCheckout(checkoutA))['dir']).toBe(stateA.dataDir);
  });

  it('stops each checkout’s own cluster only', async () => {
    expect((await runScript(checkoutA, ['stop'])).code).toBe(0);
    expect((await runScript(checkoutA, ['status'])).stdout.trim()).toBe('stopped');
    expect((await runScript(checkoutB, ['status'])).stdout).toContain('running on 127.0.0.1:');
    expect((await runScript(checkoutB, ['stop'])).code).toBe(0);
    expect((await runScript(checkoutB, ['status'])).stdout.trim()).toBe('stopped');
    expect((await queryCluster(inject('databaseUrl')))['one']).toBe(1);
  });
});
