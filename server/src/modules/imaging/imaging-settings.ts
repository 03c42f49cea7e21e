import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { z } from 'zod';
import type { DicomReadPoolOptions } from './dicom-read-pool';
import type { PendingUploadLimits } from './pending-uploads';
import type { UploadLimits } from './upload-receiver';

export interface ImagingSettings {
  fileStoreDir: string;
  /** The server secret the per-case de-identification keys derive from. */
  deidentificationSecret: string;
  upload: UploadLimits;
  pool: DicomReadPoolOptions;
  pending: PendingUploadLimits;
}

const dataDir = fileURLToPath(new URL('../../../../.data/', import.meta.url));
const mebibyte = 1_048_576;

const positive = (fallback: number) => z.coerce.number().int().positive().default(fallback);

/**
 * Limits, by environment variable. The defaults take a thin-slice abdominal CT (800 slices of
 * 512 × 512) as files or as one .zip, and keep one upload's memory near a gigabyte.
 */
const environmentSchema = z.object({
  FILE_STORE_DIR: z.string().min(1).default(`${dataDir}files`),
  DEIDENTIFICATION_SECRET: z.string().min(32).optional(),
  IMAGING_MAX_FILES: positive(2000),
  IMAGING_MAX_UPLOAD_BYTES: positive(512 * mebibyte),
  // One file may be a whole Enhanced CT series (hundreds of frames).
  IMAGING_MAX_INSTANCE_BYTES: positive(512 * mebibyte),
  IMAGING_MAX_INFLATED_BYTES: positive(768 * mebibyte),
  IMAGING_READ_TIMEOUT_MS: positive(30_000),
  IMAGING_CODEC_MEMORY_MB: positive(256),
  // Decoded int16 pixels of one file, and of the series one keep stores together.
  IMAGING_MAX_DECODED_MB: positive(1024),
  IMAGING_PENDING_MINUTES: positive(15),
  IMAGING_PENDING_MAX_BYTES: positive(1536 * mebibyte),
  IMAGING_WORKER_MEMORY_MB: positive(256),
  IMAGING_WORKERS: positive(Math.max(1, Math.min(2, availableParallelism() - 1))),
  IMAGING_MAX_QUEUED: positive(8),
});

/** The secret in DEIDENTIFICATION_SECRET, or one made once and kept in .data/ (git-ignored). */
function secretFromFile(): string {
  const file = `${dataDir}deidentification-secret`;
  if (!existsSync(file)) {
    mkdirSync(dirname(file), { recursive: true });
    try {
      writeFileSync(file, randomBytes(32).toString('base64url'), { mode: 0o600, flag: 'wx' });
    } catch (error) {
      // Another process made it first: read theirs.
      if ((error as { code?: unknown }).code !== 'EEXIST') throw error;
    }
  }
  return readFileSync(file, 'utf8').trim();
}

export function imagingSettingsFromEnvironment(env = process.env): ImagingSettings {
  const result = environmentSchema.safeParse(env);
  if (!result.success) {
    const issue = result.error.issues[0];
    throw new Error(`imaging settings: ${issue?.path.join('.')} ${issue?.message}`);
  }
  const values = result.data;
  return {
    fileStoreDir: values.FILE_STORE_DIR,
    deidentificationSecret: values.DEIDENTIFICATION_SECRET ?? secretFromFile(),
    upload: { maxFiles: values.IMAGING_MAX_FILES, maxUploadBytes: values.IMAGING_MAX_UPLOAD_BYTES },
    pool: {
      size: values.IMAGING_WORKERS,
      timeoutMs: values.IMAGING_READ_TIMEOUT_MS,
      memoryLimitMb: values.IMAGING_WORKER_MEMORY_MB,
      maxQueued: values.IMAGING_MAX_QUEUED,
      limits: {
        maxFiles: values.IMAGING_MAX_FILES,
        maxInstanceBytes: values.IMAGING_MAX_INSTANCE_BYTES,
        maxInflatedBytes: values.IMAGING_MAX_INFLATED_BYTES,
        maxSequenceDepth: 12,
        // An Enhanced CT of 1000 frames carries some 30 attributes a frame.
        maxAttributes: 100_000,
        maxCodecMemoryBytes: values.IMAGING_CODEC_MEMORY_MB * mebibyte,
        maxDecodedBytes: values.IMAGING_MAX_DECODED_MB * mebibyte,
      },
    },
    pending: {
      ttlMs: values.IMAGING_PENDING_MINUTES * 60_000,
      maxBytes: values.IMAGING_PENDING_MAX_BYTES,
    },
  };
}
