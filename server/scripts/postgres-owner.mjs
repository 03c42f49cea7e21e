// Who runs PostgreSQL's tools: the `postgres` user when we are root (initdb refuses to run as
// root), otherwise the user running the script. Shared by the cluster scripts.
import { execFileSync, spawnSync } from 'node:child_process';
import { chownSync } from 'node:fs';

export const isRoot = process.getuid?.() === 0;

export function log(message) {
  process.stderr.write(`[postgres] ${message}\n`);
}

/** Runs a PostgreSQL tool as the cluster's owner. */
export function runAsOwner(command, args, options = {}) {
  const [file, fileArgs] = isRoot
    ? ['runuser', ['-u', 'postgres', '--', command, ...args]]
    : [command, args];
  // From "/": the postgres user may not be allowed into our working folder (a mode-700 home).
  return spawnSync(file, fileArgs, { encoding: 'utf8', cwd: '/', ...options });
}

/** Whether the cluster's owner may create files in `dir` (root's postgres user may not reach it). */
export function ownerCanWrite(dir) {
  if (!isRoot) return true;
  return runAsOwner('test', ['-w', dir]).status === 0;
}

function postgresIds() {
  try {
    const id = (flag) =>
      Number(execFileSync('id', [flag, 'postgres'], { encoding: 'utf8' }).trim());
    return { uid: id('-u'), gid: id('-g') };
  } catch {
    throw new Error(
      'The "postgres" user does not exist although PostgreSQL is installed: reinstall Debian\'s ' +
        '"postgresql" package (`apt-get install --reinstall postgresql-common`), then try again.',
    );
  }
}

/** Hands a file or folder we created to the `postgres` user when we are root. */
export function chownToOwner(path) {
  if (!isRoot) return;
  const { uid, gid } = postgresIds();
  chownSync(path, uid, gid);
}
