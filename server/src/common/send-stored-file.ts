import type { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Response } from 'express';

/**
 * Streams a stored binary file (a volume, a label map, a key image's PNG) as the whole response
 * body, uncached.
 */
export async function sendStoredFile(
  response: Response,
  file: { stream: Readable; byteLength: number },
  contentType = 'application/octet-stream',
): Promise<void> {
  response.status(200).set({
    'Content-Type': contentType,
    'Content-Length': String(file.byteLength),
    'Cache-Control': 'private, no-store',
  });
  try {
    await pipeline(file.stream, response);
  } catch (error) {
    // The client went away mid-body: nothing to answer, nothing to log.
    if ((error as { code?: unknown }).code === 'ERR_STREAM_PREMATURE_CLOSE') return;
    throw error;
  }
}
