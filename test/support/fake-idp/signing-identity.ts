import { execFile } from 'node:child_process';
import { chmod, mkdir, readFile, rename, rm, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { fakeIdpFiles } from '../../../server/src/modules/saml/saml-settings';

const run = promisify(execFile);

export interface SigningIdentity {
  privateKey: string;
  certificate: string;
  certFile: string;
}

async function exists(path: string): Promise<boolean> {
  return stat(path).then(
    () => true,
    () => false,
  );
}

/**
 * The fake IdP's RSA key and self-signed certificate, made by openssl on first start and kept in
 * `dataDir` (under git-ignored `.data/`): a key is never committed, and each checkout has its own.
 */
export async function ensureSigningIdentity(dataDir: string): Promise<SigningIdentity> {
  const keyFile = join(dataDir, fakeIdpFiles.privateKey);
  const certFile = join(dataDir, fakeIdpFiles.certificate);
  if (!(await exists(keyFile)) || !(await exists(certFile))) {
    await mkdir(dataDir, { recursive: true });
    // Written under temporary names and renamed, so a reader never sees half a key pair.
    const suffix = `.${process.pid}.tmp`;
    await run('openssl', [
      'req',
      '-x509',
      '-newkey',
      'rsa:2048',
      '-nodes',
      '-sha256',
      '-days',
      '3650',
      '-subj',
      '/O=North Hospital (demo)/CN=North Hospital demo sign-in',
      '-keyout',
      keyFile + suffix,
      '-out',
      certFile + suffix,
    ]);
    await chmod(keyFile + suffix, 0o600);
    await rename(keyFile + suffix, keyFile);
    await rename(certFile + suffix, certFile);
    await rm(keyFile + suffix, { force: true });
  }
  return {
    privateKey: await readFile(keyFile, 'utf8'),
    certificate: await readFile(certFile, 'utf8'),
    certFile,
  };
}
