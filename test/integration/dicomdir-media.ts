/**
 * Export media made by an independent tool: series written into a folder with DICOM file IDs
 * (DICOM/ST000001/SE00000n/IM00000n: upper case, at most 8 characters a component, PS3.10
 * 8.2), and a DICOMDIR made over them by Debian's dcmtk `dcmmkdir` (the test set-up installs
 * dcmtk, `server/scripts/setup.mjs`). `dcmdump` of the same toolkit says what the DICOMDIR
 * holds, record by record, so the tests compare Emberline's reading with dcmtk's own.
 */
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative, sep } from 'node:path';
import type { UploadedFile } from '../../server/src/modules/imaging/upload-unpack';

export const dcmmkdir = '/usr/bin/dcmmkdir';
export const dcmdump = '/usr/bin/dcmdump';

export interface MediaFolder {
  root: string;
  /** Every file under the root, paths relative to it with '/' separators, sorted. */
  paths: string[];
}

/** An invented Patient's Name: dcmmkdir refuses files without one. */
export const mediaPatientName = 'Quill^Media QXMEDIA';

/**
 * Writes each series (files as `buildSeries` makes them) to DICOM/ST000001/SE00000n/ and runs
 * `dcmmkdir --recurse +I`: General Purpose CD-R profile (its default), inventing the type 1
 * attributes the synthetic files lack (Patient ID, Study Date…).
 */
export function makeMediaFolder(series: readonly Uint8Array[][]): MediaFolder {
  const root = mkdtempSync(join(tmpdir(), 'emberline-dicomdir-'));
  series.forEach((files, seriesIndex) => {
    const folder = join(root, 'DICOM', 'ST000001', `SE${String(seriesIndex + 1).padStart(6, '0')}`);
    mkdirSync(folder, { recursive: true });
    files.forEach((bytes, index) => {
      writeFileSync(join(folder, `IM${String(index + 1).padStart(6, '0')}`), bytes);
    });
  });
  execFileSync(
    dcmmkdir,
    ['--recurse', '+I', '-q', '+id', root, '+D', join(root, 'DICOMDIR'), 'DICOM'],
    { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] },
  );
  return { root, paths: listFiles(root) };
}

function listFiles(root: string, dir = root): string[] {
  return readdirSync(dir, { withFileTypes: true })
    .flatMap((entry) =>
      entry.isDirectory()
        ? listFiles(root, join(dir, entry.name))
        : [relative(root, join(dir, entry.name)).split(sep).join('/')],
    )
    .sort();
}

/** The folder's files as a browser sends a folder: each under `top/`, its path its name. */
export function folderFiles(folder: MediaFolder, top: string): UploadedFile[] {
  return folder.paths.map((path) => ({
    name: top ? `${top}/${path}` : path,
    bytes: new Uint8Array(readFileSync(join(folder.root, path))),
  }));
}

export interface DumpedRecord {
  type: string;
  /** Referenced File ID as dcmdump prints it, '\' between components; '' when none. */
  fileId: string;
  /** Referenced SOP Instance UID in File (0004,1511); '' when none. */
  sopInstanceUid: string;
}

/**
 * The directory records as dcmdump lists them, in the order of the Directory Record Sequence
 * (dcmmkdir writes them depth first: each record before the entity below it, then its next).
 */
export function dumpedRecords(folder: MediaFolder): DumpedRecord[] {
  const dump = execFileSync(dcmdump, ['-q', join(folder.root, 'DICOMDIR')], {
    encoding: 'latin1',
    maxBuffer: 64 * 1024 * 1024,
  });
  const records: DumpedRecord[] = [];
  for (const line of dump.split('\n')) {
    const item = /"Directory Record" (.+?) #=\d+/.exec(line);
    if (item) {
      records.push({ type: item[1], fileId: '', sopInstanceUid: '' });
      continue;
    }
    const current = records.at(-1);
    const fileId = /^\s*\(0004,1500\) CS \[([^\]]*)\]/.exec(line);
    if (current && fileId) current.fileId = fileId[1];
    const uid = /^\s*\(0004,1511\) UI \[([^\]]*)\]/.exec(line);
    if (current && uid) current.sopInstanceUid = uid[1];
  }
  return records;
}
