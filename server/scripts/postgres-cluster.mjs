// Where a checkout's PostgreSQL cluster lives, and how a folder becomes one.
//
//   <checkout>/.data/pg                   normally;
//   <tmpdir>/emberline-pg-<hash>          when the postgres user cannot reach the checkout (root
//                                         running a clone below a mode-700 folder), or when
//                                         EMBERLINE_PG_USE_TMPDIR=1 asks for it. <hash> is taken
//                                         from the checkout's absolute path, so two checkouts
//                                         never share a folder.
//
// A marker file inside every cluster names the checkout that made it and keeps its credentials:
// a cluster found without the checkout's state file is adopted only when its marker names this
// checkout; any other cluster is left alone and the next folder (`…-2`, `…-3`) is used.
import { createHash, randomBytes } from 'node:crypto';
import {
  existsSync,
  mkdirSync,
  readFileSync,
  readdirSync,
  rmSync,
  statSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, dirname, join } from 'node:path';
import { chownToOwner, log, ownerCanWrite, runAsOwner } from './postgres-owner.mjs';

const markerName = 'emberline-checkout.json';
const settingsHeading = '# Emberline: private cluster on loopback only';
const foldersTried = 9;

export function isCluster(dataDir) {
  return existsSync(join(dataDir, 'PG_VERSION'));
}

/** The marker of the cluster in `dataDir` ({ checkout, user, password }), or null. */
export function readMarker(dataDir) {
  try {
    const marker = JSON.parse(readFileSync(join(dataDir, markerName), 'utf8'));
    const isComplete = ['checkout', 'user', 'password'].every((k) => typeof marker[k] === 'string');
    return isComplete ? marker : null;
  } catch {
    return null; // no marker, or one we cannot read: not provably anyone's
  }
}

export function writeMarker(dataDir, checkout, state) {
  const file = join(dataDir, markerName);
  const marker = { checkout, user: state.user, password: state.password };
  writeFileSync(file, JSON.stringify(marker, null, 2) + '\n', { mode: 0o600 });
  chownToOwner(file);
}

function fallbackBase(checkout) {
  const hash = createHash('sha256').update(checkout).digest('hex').slice(0, 12);
  return join(tmpdir(), `emberline-pg-${hash}`);
}

function ensureFolder(dir) {
  if (existsSync(dir)) return;
  mkdirSync(dir, { recursive: true, mode: 0o700 });
  chownToOwner(dir);
}

/** The first folder of the series that the postgres user can use: in the checkout, else tmpdir. */
function folderBase(checkout, stateDir) {
  const inCheckout = join(stateDir, 'pg');
  const fallback = fallbackBase(checkout);
  if (process.env.EMBERLINE_PG_USE_TMPDIR === '1') {
    log(`EMBERLINE_PG_USE_TMPDIR=1: the cluster lives in ${fallback}(-N)`);
  } else {
    ensureFolder(inCheckout);
    if (ownerCanWrite(inCheckout)) return inCheckout;
    log(`the postgres user cannot reach ${inCheckout}; using ${fallback}(-N)`);
  }
  ensureFolder(fallback);
  if (!ownerCanWrite(fallback)) {
    throw new Error(
      `The postgres user cannot create files in ${fallback}. Set TMPDIR to a folder it can ` +
        'enter (e.g. /tmp), or keep the checkout below folders it can enter.',
    );
  }
  return fallback;
}

function isEmptyFolder(dir) {
  try {
    return readdirSync(dir).length === 0;
  } catch {
    return false;
  }
}

/**
 * Finds this checkout's cluster folder when its state file is missing: `{ dataDir, marker }` with
 * the marker of a cluster that is provably this checkout's (to adopt), or an empty folder to
 * create one in (`marker` null).
 */
export function findClusterFolder(checkout, stateDir) {
  const base = folderBase(checkout, stateDir);
  for (let n = 1; n <= foldersTried; n++) {
    const dataDir = n === 1 ? base : `${base}-${n}`;
    ensureFolder(dataDir);
    if (isCluster(dataDir)) {
      const marker = readMarker(dataDir);
      if (marker?.checkout === checkout) return { dataDir, marker };
      const owner = marker ? `it belongs to the checkout ${marker.checkout}` : 'it has no marker';
      log(`leaving the cluster in ${dataDir} alone (${owner})`);
    } else if (isEmptyFolder(dataDir)) {
      return { dataDir, marker: null };
    } else {
      log(`leaving ${dataDir} alone (it is neither empty nor a cluster)`);
    }
  }
  throw new Error(
    `No free folder for this checkout's PostgreSQL cluster among ${base} … ${base}-${foldersTried}: ` +
      'remove the ones whose data you no longer need, then try again.',
  );
}

/** The port in the Emberline settings of the cluster's postgresql.conf, or undefined. */
export function configuredPort(dataDir) {
  try {
    const text = readFileSync(join(dataDir, 'postgresql.conf'), 'utf8');
    const at = text.indexOf(settingsHeading);
    const match = at < 0 ? null : /^port = (\d+)$/m.exec(text.slice(at));
    return match ? Number(match[1]) : undefined;
  } catch {
    return undefined;
  }
}

/** Points the cluster's settings at `port` and its own folder (it may have been copied or moved). */
export function applySettings(dataDir, port) {
  const file = join(dataDir, 'postgresql.conf');
  const text = readFileSync(file, 'utf8');
  const at = text.indexOf(settingsHeading);
  if (at < 0) {
    throw new Error(
      `${file} lacks Emberline's settings (port, loopback only). Move the folder away and run ` +
        '`npm run db:start` to create a new cluster.',
    );
  }
  const block = text
    .slice(at)
    .replace(/^port = \d+$/m, `port = ${port}`)
    .replace(/^unix_socket_directories = .*$/m, `unix_socket_directories = '${dataDir}'`);
  if (block !== text.slice(at)) writeFileSync(file, text.slice(0, at) + block);
}

/** Creates a cluster in the empty folder `dataDir` listening on 127.0.0.1:`port`; its state. */
export function initCluster(bin, dataDir, port, checkout, user) {
  const password = randomBytes(18).toString('base64url');
  log(`creating a cluster in ${dataDir}`);
  // Beside the data folder, where the postgres user can read it; named after that folder so
  // that two checkouts never write the same file.
  const pwFile = join(
    dirname(dataDir),
    `.pw-${basename(dataDir)}-${randomBytes(4).toString('hex')}`,
  );
  writeFileSync(pwFile, password + '\n', { mode: 0o600 });
  let result;
  try {
    chownToOwner(pwFile);
    result = runAsOwner(join(bin, 'initdb'), [
      '-D',
      dataDir,
      '-U',
      user,
      '--auth=scram-sha-256',
      `--pwfile=${pwFile}`,
      '--encoding=UTF8',
      '--locale=C.UTF-8',
    ]);
  } finally {
    rmSync(pwFile, { force: true });
  }
  if (result.status !== 0) {
    throw new Error(`initdb failed in ${dataDir}:\n${result.stderr || result.error?.message}`);
  }
  const settings = [
    '',
    settingsHeading,
    `listen_addresses = '127.0.0.1'`,
    `port = ${port}`,
    `unix_socket_directories = '${dataDir}'`,
    `max_connections = 100`,
    `shared_buffers = 64MB`,
    '',
  ].join('\n');
  const conf = join(dataDir, 'postgresql.conf');
  writeFileSync(conf, readFileSync(conf, 'utf8') + settings);
  const state = { port, dataDir, password, user };
  writeMarker(dataDir, checkout, state);
  return state;
}

/**
 * The port a running cluster listens on, or undefined: line 4 of postmaster.pid (PID, folder,
 * start time, port, … per PostgreSQL's documentation, "Database File Layout").
 */
export function runningPort(dataDir) {
  try {
    const port = Number(readFileSync(join(dataDir, 'postmaster.pid'), 'utf8').split('\n')[3]);
    return Number.isInteger(port) && port > 0 ? port : undefined;
  } catch {
    return undefined;
  }
}

/** The server log's size now, so that a failed start reads only what it wrote itself. */
export function logSize(logFile) {
  return existsSync(logFile) ? statSync(logFile).size : 0;
}

export function logSince(logFile, offset) {
  if (!existsSync(logFile)) return '';
  return readFileSync(logFile).subarray(offset).toString('utf8');
}
