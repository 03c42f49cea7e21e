// The 127.0.0.1 port of the cluster: whether a port is free, and finding a free one.
// A port counts as free when we can bind it ourselves, which is exactly what PostgreSQL will try.
import { spawnSync } from 'node:child_process';

export const defaultPort = 54329;

/** How many ports after the preferred one are tried before asking the OS for any free port. */
const nextPortsTried = 20;

// Runs in a child process so that the scripts' API can stay synchronous.
const probeSource = `
const server = require('node:net').createServer();
server.once('error', (error) => {
  process.stdout.write(['EADDRINUSE', 'EACCES'].includes(error.code) ? 'busy' : 'error ' + error.code);
});
server.listen({ port: Number(process.argv[1]), host: '127.0.0.1', exclusive: true }, () => {
  const { port } = server.address();
  server.close(() => process.stdout.write('free ' + port));
});
`;

/** Binds 127.0.0.1:`port` for a moment; the port bound (the OS's pick for 0), or null when taken. */
function probe(port) {
  const result = spawnSync(process.execPath, ['-e', probeSource, String(port)], {
    encoding: 'utf8',
    timeout: 10_000,
  });
  const answer = (result.stdout ?? '').trim();
  if (answer === 'busy') return null;
  if (answer.startsWith('free ')) return Number(answer.slice('free '.length));
  const reason = answer || result.stderr?.trim() || result.error?.message || 'no answer';
  throw new Error(`Could not check whether 127.0.0.1:${port} is free (${reason}).`);
}

export function isPortFree(port) {
  return probe(port) !== null;
}

/** The first free port from `preferred` on (a few tries), else one the OS picks. */
export function findFreePort(preferred) {
  const last = Math.min(preferred + nextPortsTried, 65535);
  for (let port = preferred; port <= last; port++) {
    if (isPortFree(port)) return port;
  }
  const port = probe(0);
  if (port === null) throw new Error('No free TCP port on 127.0.0.1: close some programs.');
  return port;
}

/** EMBERLINE_PG_PORT as a number, or undefined when it is not set. */
export function requestedPort() {
  const value = process.env.EMBERLINE_PG_PORT;
  if (value === undefined || value === '') return undefined;
  const port = Number(value);
  if (!Number.isInteger(port) || port < 1 || port > 65535) {
    throw new Error(
      `EMBERLINE_PG_PORT must be a TCP port number (1-65535), not "${value}": set it to a free ` +
        'port such as 54339, or unset it to let the script choose one.',
    );
  }
  return port;
}
