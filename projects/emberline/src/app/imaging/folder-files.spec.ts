import { entriesOfDrop, filesOfEntries, filesOfFolderPicker, folderCount } from './folder-files';

// Fake entries of the File and Directory Entries API, shaped as a CD export is laid out
// (invented names). A directory hands its entries over in batches, as Chromium does.

function fileEntry(name: string): FileSystemEntry {
  const entry = {
    name,
    isFile: true,
    isDirectory: false,
    file: (resolve: (file: File) => void) =>
      queueMicrotask(() => resolve(new File([new Uint8Array(4)], name))),
  };
  return entry as unknown as FileSystemEntry;
}

function directoryEntry(
  name: string,
  children: FileSystemEntry[],
  batchSize = 2,
  readCalls: string[] = [],
): FileSystemEntry {
  const entry = {
    name,
    isFile: false,
    isDirectory: true,
    createReader: () => {
      let offset = 0;
      return {
        readEntries: (resolve: (batch: FileSystemEntry[]) => void) => {
          readCalls.push(name);
          const batch = children.slice(offset, offset + batchSize);
          offset += batch.length;
          queueMicrotask(() => resolve(batch));
        },
      };
    },
  };
  return entry as unknown as FileSystemEntry;
}

function unreadableDirectory(name: string): FileSystemEntry {
  const entry = {
    name,
    isFile: false,
    isDirectory: true,
    createReader: () => ({
      readEntries: (_resolve: unknown, reject: (error: DOMException) => void) =>
        queueMicrotask(() => reject(new DOMException('gone', 'NotFoundError'))),
    }),
  };
  return entry as unknown as FileSystemEntry;
}

describe('filesOfEntries', () => {
  it('walks nested folders and names each file by its path from the dropped folder', async () => {
    const study = directoryEntry('CD', [
      fileEntry('DICOMDIR'),
      directoryEntry('DICOM', [
        directoryEntry('ST00001', [
          directoryEntry('SE00004', [fileEntry('IM00002'), fileEntry('IM00001')]),
          directoryEntry('SE00002', [fileEntry('IM00001')]),
        ]),
      ]),
    ]);

    const files = await filesOfEntries([study]);

    expect(files.map(({ path }) => path)).toEqual([
      'CD/DICOM/ST00001/SE00002/IM00001',
      'CD/DICOM/ST00001/SE00004/IM00001',
      'CD/DICOM/ST00001/SE00004/IM00002',
      'CD/DICOMDIR',
    ]);
    expect(files.map(({ file }) => file.name)).toEqual([
      'IM00001',
      'IM00001',
      'IM00002',
      'DICOMDIR',
    ]);
  });

  it('reads a folder in batches until the reader hands over an empty one', async () => {
    const readCalls: string[] = [];
    const names = ['1.dcm', '2.dcm', '3.dcm', '4.dcm', '5.dcm'];
    const series = directoryEntry('SE4', names.map(fileEntry), 2, readCalls);

    const files = await filesOfEntries([series]);

    expect(files.map(({ path }) => path)).toEqual(names.map((name) => `SE4/${name}`));
    // Batches of 2, 2 and 1, then the empty batch that ends the folder.
    expect(readCalls).toEqual(['SE4', 'SE4', 'SE4', 'SE4']);
  });

  it('leaves out hidden files and folders and keeps files without an extension', async () => {
    const export_ = directoryEntry('export', [
      fileEntry('.DS_Store'),
      fileEntry('._IM0001'),
      directoryEntry('.Trashes', [fileEntry('IM0009')]),
      fileEntry('IM0001'),
      fileEntry('00000002'),
    ]);

    const files = await filesOfEntries([export_]);

    expect(files.map(({ path }) => path)).toEqual(['export/00000002', 'export/IM0001']);
  });

  it('names a file dropped on its own by its name', async () => {
    const files = await filesOfEntries([fileEntry('slice-001.dcm'), fileEntry('slice-002.dcm')]);
    expect(files.map(({ path }) => path)).toEqual(['slice-001.dcm', 'slice-002.dcm']);
  });

  it('fails when a folder cannot be read, rather than sending part of it', async () => {
    await expect(
      filesOfEntries([directoryEntry('CD', [fileEntry('DICOMDIR'), unreadableDirectory('DICOM')])]),
    ).rejects.toThrow('gone');
  });
});

describe('entriesOfDrop', () => {
  it('takes the entries of the dropped files and folders, not of dropped text', () => {
    const folder = directoryEntry('CD', []);
    const transfer = {
      items: [
        { kind: 'file', webkitGetAsEntry: () => folder },
        { kind: 'string', webkitGetAsEntry: () => null },
      ],
    } as unknown as DataTransfer;
    expect(entriesOfDrop(transfer)).toEqual([folder]);
  });

  it('answers null when the browser offers no entries', () => {
    const transfer = { items: [{ kind: 'file' }] } as unknown as DataTransfer;
    expect(entriesOfDrop(transfer)).toBeNull();
  });
});

describe('filesOfFolderPicker', () => {
  function pickedFile(relativePath: string): File {
    const file = new File([new Uint8Array(1)], relativePath.split('/').at(-1) ?? '');
    Object.defineProperty(file, 'webkitRelativePath', { value: relativePath });
    return file;
  }

  it('names each file by its path in the chosen folder and leaves hidden ones out', () => {
    const files = filesOfFolderPicker([
      pickedFile('CD/DICOMDIR'),
      pickedFile('CD/.DS_Store'),
      pickedFile('CD/.hidden/IM0001'),
      pickedFile('CD/DICOM/IM0001'),
    ]);
    expect(files.map(({ path }) => path)).toEqual(['CD/DICOMDIR', 'CD/DICOM/IM0001']);
  });
});

describe('folderCount', () => {
  it('counts every folder that holds a file, nested ones included', () => {
    const file = new File([], 'x');
    const paths = ['CD/DICOMDIR', 'CD/DICOM/SE1/IM1', 'CD/DICOM/SE2/IM1', 'CD/DICOM/SE2/IM2'];
    // CD, CD/DICOM, CD/DICOM/SE1 and CD/DICOM/SE2.
    expect(folderCount(paths.map((path) => ({ file, path })))).toBe(4);
    expect(folderCount([{ file, path: 'slice.dcm' }])).toBe(0);
  });
});
