/**
 * Turns the uploaded files into the DICOM files to read. Runs in the reading worker.
 *
 * - A file is DICOM by its content (the 128-byte preamble and "DICM", PS3.10 7.1), whatever
 *   its name: export media name their files IM000001, without an extension. What else comes
 *   along (README.TXT, autorun.inf, a viewer program, index.htm) is listed as skipped; an
 *   upload with no DICOM file at all is refused.
 * - One .zip alone is unpacked in memory by fflate under caps on entry count and inflated
 *   size. An entry's inflated size is its size declared in the central directory, checked
 *   before anything is inflated; fflate inflates into a buffer of exactly that size, so an
 *   entry that lies about it cannot take more memory than it declared.
 * - A DICOMDIR (`dicom-directory.ts`) decides what is read: exactly the files its IMAGE
 *   records name, in its order; the rest of the folder is skipped, unread (a .zip's other
 *   entries are not even inflated).
 *
 * Messages name a file by its place in the upload ("File 3", "Zip entry 5") and its base name
 * reduced to [\w.-]; nothing of a DICOMDIR's patient records is ever returned.
 */
import { unzipSync } from 'fflate';
import { InstanceRefusal } from './dicom-instance-reader';
import {
  hasPart10Marker,
  readMediaDirectory,
  type DirectoryCounts,
  type MediaDirectory,
} from './dicom-directory';
import type { RefusalReason } from './imaging-refusal';

export interface UnpackLimits {
  /** DICOM files in one upload, sent as files or as zip entries. */
  maxFiles: number;
  /** Bytes of one DICOM file (or zip entry, inflated). */
  maxInstanceBytes: number;
  /** Bytes of all zip entries together, inflated. */
  maxInflatedBytes: number;
}

export interface UploadedFile {
  /** The multipart filename: a base name, or a path like "EXPORT/DICOM/ST0/SE1/IM3". */
  name: string;
  bytes: Uint8Array;
}

export interface UploadEntry {
  /** "File 3 (IM3)" or "Zip entry 5 (IM3)": how messages name the file. */
  label: string;
  /** The path within the upload or the .zip, '/' separators. */
  path: string;
  bytes: Uint8Array;
}

export interface SkippedFile {
  /** The file's base name, reduced to [\w.-], or how many files the line stands for. */
  description: string;
  reason: string;
}

export interface UnpackResult {
  entries: UploadEntry[];
  /** Files (or zip entries) of the upload that are not read. */
  skippedCount: number;
  /** What was not read and why, for the listing shown to the presenter. */
  skipped: SkippedFile[];
  /** Present when a DICOMDIR decided what is read: its records, counted. */
  directory?: DirectoryCounts;
}

/** Lines of the skipped listing; beyond them one line counts the rest. */
const maxListedSkips = 200;
/**
 * Records one DICOMDIR may hold, per file an upload may hold: an image's record, and the
 * patient, study and series records above it, with room for images not sent.
 */
const directoryRecordsPerFile = 16;

const reasons = {
  archiver: 'hidden file or archiver metadata',
  empty: 'empty file',
  notDicom: 'not a DICOM file',
  directory: 'media directory: read for its records',
  unreferenced: 'not named by the DICOMDIR',
};

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

/** '/' separators, no leading "./" or "/", no empty components. */
function normalisedPath(name: string): string {
  return name
    .replace(/\\/g, '/')
    .split('/')
    .filter((part) => part !== '' && part !== '.')
    .join('/');
}

function baseNameOf(path: string): string {
  return path.slice(path.lastIndexOf('/') + 1);
}

function folderOf(path: string): string[] {
  return path.split('/').slice(0, -1);
}

/** A base name fit to quote: [\w.-], at most 40 characters; '' when nothing is left. */
function quotableName(path: string): string {
  return baseNameOf(path)
    .replace(/[^\w.-]/g, '')
    .slice(0, 40);
}

/**
 * How a path is matched to a File ID: upper case (media file IDs are upper case, a browser or
 * an unzip may keep another case), and without the ";1" version and trailing period that ISO
 * 9660 may add to a name (from memory).
 */
function pathKey(components: readonly string[]): string {
  return components
    .map((part, index) =>
      index === components.length - 1
        ? part.toUpperCase().replace(/;\d+$/, '').replace(/\.$/, '')
        : part.toUpperCase(),
    )
    .join('/');
}

/** Entries that are not images and that archivers and operating systems add. */
function isArchiverFile(path: string): boolean {
  return path.split('/').includes('__MACOSX') || baseNameOf(path).startsWith('.');
}

function isDirectoryName(path: string): boolean {
  return pathKey([baseNameOf(path)]) === 'DICOMDIR';
}

/** A name that says DICOM: such a file without the marker is refused, not quietly skipped. */
function isNamedDicom(path: string): boolean {
  return /\.(dcm|dicom|dic)$/i.test(path);
}

/** A file of the upload, or an entry of the .zip, until it is read or skipped. */
interface Candidate {
  /** "File 3" or "Zip entry 5". */
  ordinal: string;
  label: string;
  path: string;
  size: number;
  /** Absent for a zip entry not inflated yet. */
  bytes?: Uint8Array;
}

function candidate(ordinal: string, name: string, size: number, bytes?: Uint8Array): Candidate {
  const path = normalisedPath(name);
  const quoted = quotableName(path);
  return { ordinal, label: quoted ? `${ordinal} (${quoted})` : ordinal, path, size, bytes };
}

class SkipList {
  private readonly lines: SkippedFile[] = [];
  private unlisted = 0;
  count = 0;

  /** A file of the upload not read. */
  add(file: Candidate, reason: string): void {
    this.count += 1;
    this.line(quotableName(file.path) || file.ordinal, reason);
  }

  /** A line that stands for no file of the upload. */
  line(description: string, reason: string): void {
    if (this.lines.length < maxListedSkips) this.lines.push({ description, reason });
    else this.unlisted += 1;
  }

  listing(): SkippedFile[] {
    return this.unlisted === 0
      ? this.lines
      : [
          ...this.lines,
          {
            description: `${this.unlisted} more ${this.unlisted === 1 ? 'file' : 'files'}`,
            reason: `not read; the listing stops at ${maxListedSkips}`,
          },
        ];
  }
}

function checkInstanceSize(file: Candidate, limits: UnpackLimits, verb: string): void {
  if (file.size > limits.maxInstanceBytes) {
    refuse(
      413,
      'too-large',
      `${file.label} ${verb} ${megabytes(file.size)}; one DICOM file may be at most ` +
        `${megabytes(limits.maxInstanceBytes)}.`,
    );
  }
}

interface ReadDirectory {
  file: Candidate;
  directory: MediaDirectory;
}

/** Reads the DICOMDIRs among the files; one without the DICM marker is left as a file. */
function readDirectories(
  files: readonly Candidate[],
  limits: UnpackLimits,
): { directories: ReadDirectory[]; others: Candidate[] } {
  const directories: ReadDirectory[] = [];
  const others: Candidate[] = [];
  const maxRecords = directoryRecordsPerFile * limits.maxFiles + 64;
  for (const file of files) {
    if (file.bytes && isDirectoryName(file.path) && hasPart10Marker(file.bytes)) {
      const directory = readMediaDirectory(file.bytes, file.label, { maxRecords });
      directories.push({ file, directory });
    } else {
      others.push(file);
    }
  }
  return { directories, others };
}

/**
 * The files the DICOMDIRs' IMAGE records name, in their order; every other file is skipped.
 * Refuses when the directories name no image, or none that came with the upload.
 */
function planFromDirectories(
  directories: readonly ReadDirectory[],
  files: readonly Candidate[],
  skips: SkipList,
  where: string,
): { selected: Candidate[]; counts: DirectoryCounts } {
  const byKey = new Map<string, Candidate[]>();
  for (const file of files) {
    const key = pathKey(file.path.split('/'));
    const same = byKey.get(key);
    if (same) same.push(file);
    else byKey.set(key, [file]);
  }
  const selected: Candidate[] = [];
  const chosen = new Set<Candidate>();
  const notImages = new Map<Candidate, string>();
  const counts: DirectoryCounts = { patientCount: 0, studyCount: 0, seriesCount: 0, imageCount: 0 };
  let imageReferences = 0;
  let missing = 0;
  for (const { file: directoryFile, directory } of directories) {
    counts.patientCount += directory.counts.patientCount;
    counts.studyCount += directory.counts.studyCount;
    counts.seriesCount += directory.counts.seriesCount;
    counts.imageCount += directory.counts.imageCount;
    const folder = folderOf(directoryFile.path);
    for (const reference of directory.references) {
      const matches = byKey.get(pathKey([...folder, ...reference.fileId])) ?? [];
      if (matches.length > 1) {
        refuse(
          400,
          'dicomdir',
          `${matches[0].label} and ${matches[1].label} have the same path but for the case ` +
            `of their letters: the file ${directoryFile.label} names by it is ambiguous.`,
        );
      }
      const [match] = matches;
      if (reference.recordType !== 'IMAGE') {
        if (match) notImages.set(match, `a ${reference.recordType} record of the DICOMDIR`);
        continue;
      }
      imageReferences += 1;
      if (!match) missing += 1;
      else if (!chosen.has(match)) {
        chosen.add(match);
        selected.push(match);
      }
    }
  }
  if (imageReferences === 0) {
    refuse(
      400,
      'dicomdir',
      `The DICOMDIR ${where} names no image: it lists no IMAGE record with a Referenced File ID.`,
    );
  }
  if (selected.length === 0) {
    refuse(
      400,
      'dicomdir',
      `None of the ${imageReferences} image files the DICOMDIR names is ${where}: send the ` +
        'folder that holds the DICOMDIR with all its subfolders, or a .zip of it.',
    );
  }
  for (const { file } of directories) skips.add(file, reasons.directory);
  for (const file of files) {
    if (!chosen.has(file)) skips.add(file, notImages.get(file) ?? reasons.unreferenced);
  }
  if (missing > 0) {
    skips.line(
      `${missing} image ${missing === 1 ? 'file' : 'files'} named by the DICOMDIR`,
      'not in the upload',
    );
  }
  for (const file of selected) {
    if (file.size === 0) {
      refuse(400, 'truncated', `${file.label} is empty, though the DICOMDIR names it as an image.`);
    }
  }
  return { selected, counts };
}

/** Without a DICOMDIR: the files with the DICM marker, the others skipped or refused. */
function entriesByContent(
  files: readonly Candidate[],
  skips: SkipList,
  where: { noFiles: string; holder: string },
): UploadEntry[] {
  const entries: UploadEntry[] = [];
  let nonEmptyCount = 0;
  for (const file of files) {
    const bytes = file.bytes ?? new Uint8Array(0);
    if (bytes.length === 0) {
      skips.add(file, reasons.empty);
      continue;
    }
    nonEmptyCount += 1;
    if (hasPart10Marker(bytes)) {
      entries.push({ label: file.label, path: file.path, bytes });
    } else if (isNamedDicom(file.path)) {
      refuse(
        415,
        'not-dicom',
        `${file.label} is not a DICOM file: it lacks the "DICM" marker after the 128-byte ` +
          'preamble (DICOM PS3.10 7.1).',
      );
    } else {
      skips.add(file, reasons.notDicom);
    }
  }
  if (nonEmptyCount === 0) refuse(400, 'no-files', where.noFiles);
  if (entries.length === 0) {
    refuse(
      415,
      'not-dicom',
      (nonEmptyCount === 1
        ? `The one file ${where.holder} holds is not a DICOM file: it lacks`
        : `None of the ${nonEmptyCount} files ${where.holder} holds is a DICOM file: none has`) +
        ' the "DICM" marker after the 128-byte preamble (DICOM PS3.10 7.1). Send the DICOM ' +
        'files of one series, or one .zip of them.',
    );
  }
  return entries;
}

interface ZipCandidate extends Candidate {
  /** The entry's name as the archive writes it: the key fflate answers by. */
  name: string;
  compression: number;
}

function unpackZip(archive: Uint8Array, limits: UnpackLimits, skips: SkipList): UnpackResult {
  const candidates: ZipCandidate[] = [];
  const byName = new Map<string, ZipCandidate>();
  let entryNumber = 0;
  let fileCount = 0;
  let inflatedBytes = 0;

  /** Checked before an entry is inflated, from what the central directory declares. */
  const checkInflation = (file: ZipCandidate) => {
    if (file.compression !== 0 && file.compression !== 8) {
      refuse(
        415,
        'zip',
        `${file.label} is compressed with method ${file.compression}; Emberline reads stored ` +
          'and deflated zip entries only.',
      );
    }
    checkInstanceSize(file, limits, 'inflates to');
    inflatedBytes += file.size;
    if (inflatedBytes > limits.maxInflatedBytes) {
      refuse(
        413,
        'too-large',
        `The .zip inflates to more than ${megabytes(limits.maxInflatedBytes)}, the most one ` +
          'upload may hold.',
      );
    }
  };

  const inflate = (filter: Parameters<typeof unzipSync>[1]) => {
    let inflated: Record<string, Uint8Array>;
    try {
      inflated = unzipSync(archive, filter);
    } catch (error) {
      if (error instanceof InstanceRefusal) throw error;
      const reason = error instanceof Error ? error.message.replace(/[^\w ,./-]/g, '') : '';
      refuse(400, 'zip', `The .zip archive is damaged or not a zip archive (${reason}).`);
    }
    for (const [name, bytes] of Object.entries(inflated)) {
      const file = byName.get(name);
      if (file) file.bytes = bytes;
    }
  };

  // First pass: list the entries from the central directory; inflate the DICOMDIRs only.
  inflate({
    filter: (entry) => {
      entryNumber += 1;
      if (entry.name.endsWith('/')) return false;
      const file: ZipCandidate = {
        ...candidate(`Zip entry ${entryNumber}`, entry.name, entry.originalSize),
        name: entry.name,
        compression: entry.compression,
      };
      if (isArchiverFile(file.path)) {
        skips.add(file, reasons.archiver);
        return false;
      }
      if (byName.has(entry.name)) {
        refuse(400, 'zip', `${file.label} repeats the path of an earlier entry of the .zip.`);
      }
      candidates.push(file);
      byName.set(entry.name, file);
      if (isDirectoryName(file.path)) {
        checkInflation(file);
        return true;
      }
      fileCount += 1;
      if (fileCount > limits.maxFiles) {
        refuse(
          413,
          'too-many-files',
          `The .zip holds more than ${limits.maxFiles} files; an upload may hold at most ` +
            `${limits.maxFiles}.`,
        );
      }
      return false;
    },
  });

  const { directories, others } = readDirectories(candidates, limits);
  const plan =
    directories.length > 0
      ? planFromDirectories(directories, others, skips, 'in the .zip')
      : undefined;
  // Second pass: inflate what is to be read (without a DICOMDIR: every entry, to see what
  // it is); an entry a DICOMDIR does not name is never inflated.
  const toInflate = new Set(
    (plan?.selected ?? others).filter((file) => !file.bytes && file.size > 0),
  );
  if (toInflate.size > 0) {
    inflate({
      filter: (entry) => {
        const file = byName.get(entry.name);
        if (!file || !toInflate.has(file)) return false;
        checkInflation(file);
        return true;
      },
    });
  }
  const entries = plan
    ? plan.selected.map((file) => ({
        label: file.label,
        path: file.path,
        bytes: file.bytes ?? new Uint8Array(0),
      }))
    : entriesByContent(others, skips, {
        noFiles: 'The .zip holds no DICOM files.',
        holder: 'the .zip',
      });
  return {
    entries,
    skippedCount: skips.count,
    skipped: skips.listing(),
    ...(plan ? { directory: plan.counts } : {}),
  };
}

/**
 * The DICOM files of an upload: several files (a folder's, with their relative paths), or one
 * .zip alone; a DICOMDIR among them decides what is read.
 */
export function unpackUpload(files: readonly UploadedFile[], limits: UnpackLimits): UnpackResult {
  if (files.length > limits.maxFiles) {
    refuse(
      413,
      'too-many-files',
      `The upload holds ${files.length} files; it may hold at most ${limits.maxFiles}.`,
    );
  }
  const skips = new SkipList();
  const candidates: Candidate[] = [];
  files.forEach((file, index) => {
    const entry = candidate(`File ${index + 1}`, file.name, file.bytes.length, file.bytes);
    if (isArchiverFile(entry.path)) skips.add(entry, reasons.archiver);
    else candidates.push(entry);
  });
  const [only] = candidates;
  if (candidates.length === 1 && only.bytes && isZip(only.bytes)) {
    return unpackZip(only.bytes, limits, skips);
  }

  for (const file of candidates) {
    if (isDirectoryName(file.path)) checkInstanceSize(file, limits, 'is');
  }
  const { directories, others } = readDirectories(candidates, limits);
  if (directories.length > 0) {
    const { selected, counts } = planFromDirectories(directories, others, skips, 'in the upload');
    const entries = selected.map((file) => {
      checkInstanceSize(file, limits, 'is');
      return { label: file.label, path: file.path, bytes: file.bytes ?? new Uint8Array(0) };
    });
    return { entries, skippedCount: skips.count, skipped: skips.listing(), directory: counts };
  }

  const zip = candidates.find((file) => file.bytes && isZip(file.bytes));
  if (zip) {
    refuse(
      400,
      'zip',
      `${zip.label} is a .zip among ${files.length} files; send one .zip alone, or DICOM ` +
        'files without a .zip.',
    );
  }
  // Every file is held to the size of one DICOM file before its content is looked at, as
  // before files were recognised by their content: a refusal rather than a quiet skip.
  for (const file of candidates) checkInstanceSize(file, limits, 'is');
  const entries = entriesByContent(candidates, skips, {
    noFiles: 'The upload holds no file to read: its files are empty, hidden or archiver metadata.',
    holder: 'the upload',
  });
  return { entries, skippedCount: skips.count, skipped: skips.listing() };
}
