// One start of a checkout's cluster at a time: two `npm test` runs in the same working tree would
// otherwise create or start the same cluster twice at once.
import { closeSync, openSync, readFileSync, rmSync, statSync, writeSync } from 'node:fs';

const waitMs = 120_000;
const pollMs = 100;
/** A lock file still empty after this long was left by a process that died while creating it. */
const emptyLockStaleMs = 10_000;

function sleep(ms) {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

function isAlive(pid) {
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    return error.code === 'EPERM';
  }
}

function readHolder(lockFile) {
  try {
    return {
      pid: Number(readFileSync(lockFile, 'utf8').trim()),
      ageMs: Date.now() - statSync(lockFile).mtimeMs,
    };
  } catch {
    return null; // released in the meantime
  }
}

function isStale(holder) {
  if (holder.pid > 0) return !isAlive(holder.pid);
  return holder.ageMs > emptyLockStaleMs;
}

function tryAcquire(lockFile) {
  try {
    const fd = openSync(lockFile, 'wx', 0o600);
    writeSync(fd, String(process.pid));
    closeSync(fd);
    return true;
  } catch (error) {
    if (error.code === 'EEXIST') return false;
    throw new Error(`Could not create the lock file ${lockFile}: ${error.message}`);
  }
}

/** Runs `action` while holding `lockFile`; waits for another live holder, takes over a dead one's. */
export function withLock(lockFile, action) {
  const deadline = Date.now() + waitMs;
  while (!tryAcquire(lockFile)) {
    const holder = readHolder(lockFile);
    if (holder && isStale(holder)) {
      rmSync(lockFile, { force: true });
      continue;
    }
    if (Date.now() > deadline) {
      throw new Error(
        `Another start of this checkout's PostgreSQL (process ${holder?.pid}) has held ` +
          `${lockFile} for ${waitMs / 1000} s. Wait for it, or stop that process; if no such ` +
          'process runs, remove the file.',
      );
    }
    sleep(pollMs);
  }
  try {
    return action();
  } finally {
    if (readHolder(lockFile)?.pid === process.pid) rmSync(lockFile, { force: true });
  }
}
