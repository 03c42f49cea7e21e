// First-run set-up shared by `npm start` and `npm test`: dependencies and Debian packages.
import { execFileSync, spawn } from 'node:child_process';
import { existsSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const isRoot = process.getuid?.() === 0;

export function say(message) {
  process.stderr.write(`\x1b[36m[emberline]\x1b[0m ${message}\n`);
}

/** `npm ci` when node_modules is missing or older than the lock file. */
export function ensureDependencies() {
  const installed = join(root, 'node_modules', '.package-lock.json');
  const lock = join(root, 'package-lock.json');
  if (existsSync(installed) && statSync(installed).mtimeMs >= statSync(lock).mtimeMs) return;
  say('installing dependencies (npm ci)…');
  execFileSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: root, stdio: 'inherit' });
}

/** Debian's Chromium for the end-to-end tests (installing it needs root). */
export function ensureChromium() {
  if (existsSync('/usr/bin/chromium')) return '/usr/bin/chromium';
  if (!isRoot) {
    throw new Error(
      'Chromium is missing: run `sudo apt-get update && sudo apt-get install -y chromium`, then try again.',
    );
  }
  say("installing Debian's chromium package (one time)…");
  execFileSync('apt-get', ['update', '-qq'], { stdio: 'inherit' });
  execFileSync(
    'apt-get',
    ['install', '-y', '-qq', '--no-install-recommends', 'chromium', 'fonts-dejavu-core'],
    {
      stdio: 'inherit',
      env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
    },
  );
  return '/usr/bin/chromium';
}

/**
 * Debian's dcmtk and OpenJPEG tools, which make the compressed reference DICOM files of the
 * pixel-data codec tests (`test/support/compressed-dicom.ts`); installing them needs root.
 */
export function ensureDicomTools() {
  if (existsSync('/usr/bin/dcmcjpeg') && existsSync('/usr/bin/opj_compress')) return;
  if (!isRoot) {
    throw new Error(
      'dcmtk or the OpenJPEG tools are missing: run `sudo apt-get update && sudo apt-get install -y dcmtk libopenjp2-tools`, then try again.',
    );
  }
  say("installing Debian's dcmtk and libopenjp2-tools packages (one time)…");
  execFileSync('apt-get', ['update', '-qq'], { stdio: 'inherit' });
  execFileSync(
    'apt-get',
    ['install', '-y', '-qq', '--no-install-recommends', 'dcmtk', 'libopenjp2-tools'],
    {
      stdio: 'inherit',
      env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
    },
  );
}

/**
 * Debian's poppler-utils (`pdftotext`, `pdfinfo`), with which the board summary PDF's test reads
 * back the text and page count of the PDF the server makes; installing them needs root.
 */
export function ensurePdfTools() {
  if (existsSync('/usr/bin/pdftotext') && existsSync('/usr/bin/pdfinfo')) return;
  if (!isRoot) {
    throw new Error(
      'pdftotext or pdfinfo is missing: run `sudo apt-get update && sudo apt-get install -y poppler-utils`, then try again.',
    );
  }
  say("installing Debian's poppler-utils package (one time)…");
  execFileSync('apt-get', ['update', '-qq'], { stdio: 'inherit' });
  execFileSync('apt-get', ['install', '-y', '-qq', '--no-install-recommends', 'poppler-utils'], {
    stdio: 'inherit',
    env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
  });
}

/** Runs a command, streaming its output; resolves with its exit code. */
export function run(command, args, options = {}) {
  return new Promise((resolvePromise) => {
    const child = spawn(command, args, { cwd: root, stdio: 'inherit', ...options });
    child.on('exit', (code, signal) => resolvePromise(code ?? (signal ? 1 : 0)));
    child.on('error', () => resolvePromise(127));
  });
}

/** Resolves once something listens on 127.0.0.1:port, or rejects after the timeout. */
export async function waitForPort(port, timeoutMs = 30_000) {
  const { connect } = await import('node:net');
  const started = Date.now();
  for (;;) {
    const isOpen = await new Promise((r) => {
      const socket = connect({ host: '127.0.0.1', port }, () => {
        socket.end();
        r(true);
      });
      socket.on('error', () => r(false));
    });
    if (isOpen) return;
    if (Date.now() - started > timeoutMs)
      throw new Error(`nothing answered on 127.0.0.1:${port} within ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 200));
  }
}
