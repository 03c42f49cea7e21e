/**
 * Turns the uploaded files into the DICOM files to read: the files themselves, or the entries
 * of one .zip, inflated in memory by fflate under caps on entry count and inflated size. Runs
 * in the reading worker. An entry's inflated size is its size declared in the central
 * directory, checked before anything is inflated; fflate inflates into a buffer of exactly
 * that size, so an entry that lies about it cannot take more memory than it declared.
 */
import { unzipSync } from 'fflate';
import { InstanceRefusal } from './dicom-instance-reader';
import type { RefusalReason } from './imaging-refusal';

export interface UnpackLimits {
  /** DICOM files in one upload, sent as files or as zip entries. */
  maxFiles: number;
  /** Bytes of one DICOM file (or zip entry, inflated). */
  maxInstanceBytes: number;
  /** Bytes of all zip entries together, inflated. */
  maxInflatedBytes: number;
}

export interface UploadEntry {
  label: string;
  bytes: Uint8Array;
}

function refuse(status: number, reason: RefusalReason, detail: string): never {
  throw new InstanceRefusal({ status, reason, detail });
}

function megabytes(bytes: number): string {
  return `${(bytes / 1_048_576).toFixed(1)} MB`;
}

/** A local file header ("PK\3\4") or the end record of an empty archive ("PK\5\6"). */
export function isZip(bytes: Uint8Array): boolean {
  return (
    bytes.length >= 4 &&
    bytes[0] === 0x50 &&
    bytes[1] === 0x4b &&
    ((bytes[2] === 3 && bytes[3] === 4) || (bytes[2] === 5 && bytes[3] === 6))
  );
}

/** Entries that are not images and that archivers and media add: skipped, never refused. */
function isSkippedEntry(name: string): boolean {
  const baseName = name.split('/').pop() ?? '';
  return name.startsWith('__MACOSX/') || baseName.startsWith('.') || /^DICOMDIR$/i.test(baseName);
}

function unpackZip(
  archive: Uint8Array,
  limits: UnpackLimits,
): { entries: UploadEntry[]; skippedCount: number } {
  const accepted: { name: string; label: string }[] = [];
  const names = new Set<string>();
  let entryNumber = 0;
  let skippedCount = 0;
  let inflatedBytes = 0;
  let files: Record<string, Uint8Array>;
  try {
    files = unzipSync(archive, {
      filter: (entry) => {
        entryNumber += 1;
        const label = `Zip entry ${entryNumber}`;
        if (entry.name.endsWith('/')) return false;
        if (isSkippedEntry(entry.name)) {
          skippedCount += 1;
          return false;
        }
        if (accepted.length + 1 > limits.maxFiles) {
          refuse(
            413,
            'too-many-files',
            `The .zip holds more than ${limits.maxFiles} files; an upload may hold at most ` +
              `${limits.maxFiles}.`,
          );
        }
        if (entry.compression !== 0 && entry.compression !== 8) {
          refuse(
            415,
            'zip',
            `${label} is compressed with method ${entry.compression}; Emberline reads stored ` +
              'and deflated zip entries only.',
          );
        }
        if (entry.originalSize > limits.maxInstanceBytes) {
          refuse(
            413,
            'too-large',
            `${label} inflates to ${megabytes(entry.originalSize)}; one DICOM file may be at ` +
              `most ${megabytes(limits.maxInstanceBytes)}.`,
          );
        }
        inflatedBytes += entry.originalSize;
        if (inflatedBytes > limits.maxInflatedBytes) {
          refuse(
            413,
            'too-large',
            `The .zip inflates to more than ${megabytes(limits.maxInflatedBytes)}, the most one ` +
              'upload may hold.',
          );
        }
        if (names.has(entry.name)) {
          refuse(400, 'zip', `${label} repeats the path of an earlier entry of the .zip.`);
        }
        names.add(entry.name);
        accepted.push({ name: entry.name, label });
        return true;
      },
    });
  } catch (error) {
    if (error instanceof InstanceRefusal) throw error;
    const reason = error instanceof Error ? error.message.replace(/[^\w ,./-]/g, '') : '';
    refuse(400, 'zip', `The .zip archive is damaged or not a zip archive (${reason}).`);
  }
  const entries = accepted.map(({ name, label }) => ({ label, bytes: files[name] }));
  if (entries.length === 0) {
    refuse(400, 'no-files', 'The .zip holds no DICOM files.');
  }
  return { entries, skippedCount };
}

/** The DICOM files of an upload: several files, or one .zip alone. */
export function unpackUpload(
  files: readonly Uint8Array[],
  limits: UnpackLimits,
): { entries: UploadEntry[]; skippedCount: number } {
  const zipIndex = files.findIndex(isZip);
  if (zipIndex >= 0) {
    if (files.length > 1) {
      refuse(
        400,
        'zip',
        `File ${zipIndex + 1} is a .zip among ${files.length} files; send one .zip alone, or ` +
          'DICOM files without a .zip.',
      );
    }
    return unpackZip(files[0], limits);
  }
  if (files.length > limits.maxFiles) {
    refuse(
      413,
      'too-many-files',
      `The upload holds ${files.length} files; it may hold at most ${limits.maxFiles}.`,
    );
  }
  const entries = files.map((bytes, index) => {
    if (bytes.length > limits.maxInstanceBytes) {
      refuse(
        413,
        'too-large',
        `File ${index + 1} is ${megabytes(bytes.length)}; one DICOM file may be at most ` +
          `${megabytes(limits.maxInstanceBytes)}.`,
      );
    }
    return { label: `File ${index + 1}`, bytes };
  });
  return { entries, skippedCount: 0 };
}
