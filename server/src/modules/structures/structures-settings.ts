import { fileURLToPath } from 'node:url';
import { z } from 'zod';
import type { DicomSegReadOptions } from './dicom-seg-reader';

export interface StructuresSettings {
  /** The file store's folder (shared with the image volumes; label maps go in a folder of it). */
  fileStoreDir: string;
  /** Bytes of the label map file as sent (a .nii.gz counts compressed). */
  maxUploadBytes: number;
  /** Bounds of reading a DICOM SEG file (in a worker thread). */
  segmentationRead: DicomSegReadOptions;
}

const dataDir = fileURLToPath(new URL('../../../../.data/', import.meta.url));
const mebibyte = 1_048_576;

const environmentSchema = z.object({
  FILE_STORE_DIR: z.string().min(1).default(`${dataDir}files`),
  STRUCTURES_MAX_UPLOAD_BYTES: z.coerce
    .number()
    .int()
    .positive()
    .default(256 * mebibyte),
  STRUCTURES_READ_TIMEOUT_MS: z.coerce.number().int().positive().default(60_000),
  STRUCTURES_WORKER_MEMORY_MB: z.coerce.number().int().positive().default(256),
  STRUCTURES_MAX_CONCURRENT_READS: z.coerce.number().int().positive().default(2),
});

export function structuresSettingsFromEnvironment(env = process.env): StructuresSettings {
  const result = environmentSchema.safeParse(env);
  if (!result.success) {
    const issue = result.error.issues[0];
    throw new Error(`structures settings: ${issue?.path.join('.')} ${issue?.message}`);
  }
  return {
    fileStoreDir: result.data.FILE_STORE_DIR,
    maxUploadBytes: result.data.STRUCTURES_MAX_UPLOAD_BYTES,
    segmentationRead: {
      timeoutMs: result.data.STRUCTURES_READ_TIMEOUT_MS,
      memoryLimitMb: result.data.STRUCTURES_WORKER_MEMORY_MB,
      maxConcurrent: result.data.STRUCTURES_MAX_CONCURRENT_READS,
    },
  };
}
