import type { UploadFile } from './series-api';

/**
 * Names the operating system hides (".DS_Store", "._IM0001", ".Trashes"): never part of a study,
 * so they are left out of a folder. Files without an extension are kept: CD exports name their
 * images "IM0001" or "00000001", and the DICOMDIR index has none either.
 */
export function isHiddenName(name: string): boolean {
  return name.startsWith('.');
}

/** The files of a chosen folder (`webkitdirectory`), under their path within it, hidden ones left out. */
export function filesOfFolderPicker(files: readonly File[]): UploadFile[] {
  return files
    .map((file) => ({ file, path: file.webkitRelativePath || file.name }))
    .filter(({ path }) => !path.split('/').some(isHiddenName));
}

/**
 * The entries of a drop, or null when the browser offers no entries (then `files` holds what was
 * dropped, without folders). Must be called during the drop event itself: the browser empties
 * the list of items once the event handler returns.
 */
export function entriesOfDrop(transfer: DataTransfer): FileSystemEntry[] | null {
  const items = Array.from(transfer.items ?? []);
  if (!items.length || typeof items[0].webkitGetAsEntry !== 'function') return null;
  return items
    .filter((item) => item.kind === 'file')
    .map((item) => item.webkitGetAsEntry())
    .filter((entry): entry is FileSystemEntry => entry !== null);
}

/**
 * Every file under the dropped entries, with its path from the dropped item ("study/SE4/IM0001";
 * a dropped file alone is its own name), sorted by path; hidden files and folders left out.
 */
export async function filesOfEntries(entries: readonly FileSystemEntry[]): Promise<UploadFile[]> {
  const found = await Promise.all(entries.map((entry) => filesUnder(entry, '')));
  return found.flat().sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));
}

/** How many folders hold the files, nested ones included ("a/b/c.dcm" lies in two). */
export function folderCount(files: readonly UploadFile[]): number {
  const folders = new Set<string>();
  for (const { path } of files) {
    const parts = path.split('/').slice(0, -1);
    for (let depth = 1; depth <= parts.length; depth++) {
      folders.add(parts.slice(0, depth).join('/'));
    }
  }
  return folders.size;
}

async function filesUnder(entry: FileSystemEntry, parentPath: string): Promise<UploadFile[]> {
  if (isHiddenName(entry.name)) return [];
  const path = parentPath ? `${parentPath}/${entry.name}` : entry.name;
  if (isFileEntry(entry)) return [{ file: await fileOf(entry), path }];
  if (isDirectoryEntry(entry)) {
    const children = await allEntries(entry.createReader());
    const found = await Promise.all(children.map((child) => filesUnder(child, path)));
    return found.flat();
  }
  return [];
}

/** `readEntries` hands a directory over in batches (Chromium: 100 at a time) until an empty one. */
async function allEntries(reader: FileSystemDirectoryReader): Promise<FileSystemEntry[]> {
  const entries: FileSystemEntry[] = [];
  for (;;) {
    const batch = await new Promise<FileSystemEntry[]>((resolve, reject) =>
      reader.readEntries(resolve, reject),
    );
    if (!batch.length) return entries;
    entries.push(...batch);
  }
}

function fileOf(entry: FileSystemFileEntry): Promise<File> {
  return new Promise((resolve, reject) => entry.file(resolve, reject));
}

function isFileEntry(entry: FileSystemEntry): entry is FileSystemFileEntry {
  return entry.isFile;
}

function isDirectoryEntry(entry: FileSystemEntry): entry is FileSystemDirectoryEntry {
  return entry.isDirectory;
}
