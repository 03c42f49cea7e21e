import { randomUUID } from 'node:crypto';
import type { ReadStream } from 'node:fs';
import { mkdir, open, readFile, rename, rm } from 'node:fs/promises';
import { dirname, join, resolve, sep } from 'node:path';

/**
 * Keys the store accepts: a folder, a UUID and an extension — nothing derived from the data,
 * nothing a caller could steer outside the root.
 */
const keyPattern = /^[a-z][a-z-]{0,30}\/[0-9a-f-]{36}\.[a-z]{2,8}$/;
const temporaryPrefix = '.incoming-';

/**
 * Files of Emberline kept on disk (`FILE_STORE_DIR`, `.data/files/` by default), written
 * atomically: the bytes go to a temporary file beside the target, are flushed to disk, and
 * the file is renamed into place, so that a reader sees a whole file or none. Whatever fails
 * on the way removes the temporary file.
 */
export class FileStore {
  readonly rootDir: string;

  constructor(rootDir: string) {
    this.rootDir = resolve(rootDir);
  }

  /** A fresh key for a volume body. */
  newVolumeKey(): string {
    return `volumes/${randomUUID()}.vol`;
  }

  private pathOf(key: string): string {
    if (!keyPattern.test(key)) throw new Error('not a file store key');
    const path = join(this.rootDir, ...key.split('/'));
    if (!path.startsWith(this.rootDir + sep)) throw new Error('not a file store key');
    return path;
  }

  /** Writes the parts one after the other as the file `key`; answers the byte length. */
  async writeAtomically(key: string, parts: readonly Uint8Array[]): Promise<number> {
    const target = this.pathOf(key);
    await mkdir(dirname(target), { recursive: true, mode: 0o700 });
    const temporary = join(dirname(target), `${temporaryPrefix}${randomUUID()}`);
    let byteLength = 0;
    try {
      const handle = await open(temporary, 'wx', 0o600);
      try {
        for (const part of parts) {
          let written = 0;
          while (written < part.byteLength) {
            const result = await handle.write(part, written, part.byteLength - written);
            written += result.bytesWritten;
          }
          byteLength += part.byteLength;
        }
        await handle.sync();
      } finally {
        await handle.close();
      }
      await rename(temporary, target);
    } catch (error) {
      await rm(temporary, { force: true });
      throw error;
    }
    return byteLength;
  }

  /** Opens the file `key` for reading; rejects (ENOENT…) before anything is streamed. */
  async openRead(key: string): Promise<{ stream: ReadStream; byteLength: number }> {
    const handle = await open(this.pathOf(key), 'r');
    try {
      const { size } = await handle.stat();
      return { stream: handle.createReadStream({ autoClose: true }), byteLength: size };
    } catch (error) {
      await handle.close();
      throw error;
    }
  }

  /** The whole file `key` in memory (label maps for the assessment engine: a few MB). */
  async readWhole(key: string): Promise<Uint8Array> {
    return new Uint8Array(await readFile(this.pathOf(key)));
  }

  async remove(key: string): Promise<void> {
    await rm(this.pathOf(key), { force: true });
  }
}
