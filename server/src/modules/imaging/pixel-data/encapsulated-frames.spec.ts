/**
 * Splitting encapsulated Pixel Data into frames (DICOM PS3.5 A.4), on multi-frame files that
 * dcmtk wrote (dcmcjpeg, dcmcjpls, dcmcrle: with its Basic Offset Table, with none, one or
 * several fragments a frame) and on JPEG 2000 frames wrapped by the test support (Basic,
 * Extended or no offset table). dcmtk's own offset tables are the independent reference: the
 * frames found by them must be the frames found without them.
 */
import { readFileSync } from 'node:fs';
import dicomParser, { type DataSet } from 'dicom-parser';
import { describe, expect, it } from 'vitest';
import {
  compressedDicomSet,
  uids,
  type Encapsulation,
  type ReferenceFile,
} from '../../../../../test/support/compressed-dicom';
import { InstanceRefusal } from '../dicom-instance-reader';
import { encapsulatedFrames } from './encapsulated-frames';
import { withExtendedOffsetTableReadable } from './extended-offset-table';

const set = compressedDicomSet();
const multiFrame = set.files.filter((file) => file.frames.length > 1);

function multi(uid: string, encapsulation: Encapsulation): ReferenceFile {
  const file = multiFrame.find(
    (candidate) => candidate.transferSyntaxUid === uid && candidate.encapsulation === encapsulation,
  );
  if (!file) throw new Error(`no ${uid} file with ${encapsulation}`);
  return file;
}

function bytesOf(file: ReferenceFile): Uint8Array {
  return new Uint8Array(readFileSync(file.path));
}

function parse(bytes: Uint8Array): DataSet {
  return dicomParser.parseDicom(withExtendedOffsetTableReadable(bytes));
}

function split(bytes: Uint8Array, frameCount = 4): Uint8Array[] {
  const dataSet = parse(bytes);
  return encapsulatedFrames(dataSet, dataSet.elements.x7fe00010, frameCount, 'File 2');
}

function refusal(action: () => unknown): InstanceRefusal {
  try {
    action();
  } catch (error) {
    if (error instanceof InstanceRefusal) return error;
    throw error;
  }
  throw new Error('expected a refusal');
}

/** A codestream with its trailing zero padding (PS3.5 A.4: items have even lengths) removed. */
function unpadded(frame: Uint8Array): number[] {
  let end = frame.length;
  while (end > 0 && frame[end - 1] === 0) end--;
  return [...frame.subarray(0, end)];
}

describe('frames of dcmtk multi-frame files', () => {
  for (const [what, uid, start] of [
    ['JPEG Lossless', uids.jpegLosslessSv1, [0xff, 0xd8]],
    ['JPEG-LS', uids.jpegLs, [0xff, 0xd8]],
  ] as const) {
    it(`${what}: the Basic Offset Table dcmtk wrote and the SOI markers give the same four frames`, () => {
      const byTable = split(bytesOf(multi(uid, 'one fragment, Basic Offset Table')));
      const byFragment = split(bytesOf(multi(uid, 'one fragment, no offset table')));
      const byTableSeveral = split(bytesOf(multi(uid, 'several fragments, Basic Offset Table')));
      const byMarkers = split(bytesOf(multi(uid, 'several fragments, no offset table')));
      expect(byTable).toHaveLength(4);
      for (let frame = 0; frame < 4; frame++) {
        const reference = unpadded(byTable[frame]);
        expect([...reference.slice(0, 2)]).toEqual(start);
        expect(reference.slice(-2)).toEqual([0xff, 0xd9]);
        expect(unpadded(byFragment[frame])).toEqual(reference);
        expect(unpadded(byTableSeveral[frame])).toEqual(reference);
        expect(unpadded(byMarkers[frame])).toEqual(reference);
      }
    });
  }

  it('the several-fragment files do spread frames over fragments (dcmtk +fs 4: 4 kB each)', () => {
    const dataSet = parse(
      bytesOf(multi(uids.jpegLosslessSv1, 'several fragments, no offset table')),
    );
    expect(dataSet.elements.x7fe00010.fragments?.length).toBeGreaterThan(4 * 4);
    expect(dataSet.elements.x7fe00010.basicOffsetTable).toEqual([]);
  });

  it('RLE: one fragment a frame, with and without the table', () => {
    const byTable = split(bytesOf(multi(uids.rle, 'one fragment, Basic Offset Table')));
    const byFragment = split(bytesOf(multi(uids.rle, 'one fragment, no offset table')));
    expect(byTable.map((frame) => [...frame])).toEqual(byFragment.map((frame) => [...frame]));
    // Each frame opens with its RLE header: two segments, the first at 64 (PS3.5 G.5).
    for (const frame of byTable) {
      const view = new DataView(frame.buffer, frame.byteOffset, 8);
      expect([view.getUint32(0, true), view.getUint32(4, true)]).toEqual([2, 64]);
    }
  });
});

describe('JPEG 2000 frames in every encapsulation', () => {
  const encapsulations: Encapsulation[] = [
    'one fragment, Basic Offset Table',
    'one fragment, no offset table',
    'one fragment, Extended Offset Table',
    'several fragments, Basic Offset Table',
    'several fragments, no offset table',
  ];

  it.each(encapsulations)('%s: the four codestreams opj_compress made', (encapsulation) => {
    const frames = split(bytesOf(multi(uids.j2kLossless, encapsulation)));
    const reference = split(bytesOf(multi(uids.j2kLossless, 'one fragment, Basic Offset Table')));
    expect(frames).toHaveLength(4);
    frames.forEach((frame, index) => {
      expect([...frame.subarray(0, 4)]).toEqual([0xff, 0x4f, 0xff, 0x51]);
      expect(unpadded(frame)).toEqual(unpadded(reference[index]));
    });
  });

  it('the Extended Offset Table Lengths trim each frame to its codestream', () => {
    const frames = split(bytesOf(multi(uids.j2kLossless, 'one fragment, Extended Offset Table')));
    const dataSet = parse(bytesOf(multi(uids.j2kLossless, 'one fragment, Extended Offset Table')));
    const lengths = dataSet.elements.x7fe00002;
    const view = new DataView(
      dataSet.byteArray.buffer,
      dataSet.byteArray.byteOffset + lengths.dataOffset,
      32,
    );
    expect(frames.map((frame) => frame.length)).toEqual(
      [0, 8, 16, 24].map((at) => Number(view.getBigUint64(at, true))),
    );
  });

  it('dicom-parser cannot read the OV of an Extended Offset Table unaided, but can once it reads as OB', () => {
    const bytes = bytesOf(multi(uids.j2kLossless, 'one fragment, Extended Offset Table'));
    expect(() => dicomParser.parseDicom(bytes)).toThrow();
    const readable = withExtendedOffsetTableReadable(bytes);
    expect(readable).not.toBe(bytes);
    // Only the two VRs change ("OV" → "OB"), nothing else.
    const changed = [...bytes.keys()].filter((index) => bytes[index] !== readable[index]);
    expect(changed).toHaveLength(2);
    expect(changed.map((index) => String.fromCharCode(bytes[index - 1], bytes[index]))).toEqual([
      'OV',
      'OV',
    ]);
  });

  it('a file without an Extended Offset Table is given back as it is', () => {
    const bytes = bytesOf(multi(uids.j2kLossless, 'one fragment, Basic Offset Table'));
    expect(withExtendedOffsetTableReadable(bytes)).toBe(bytes);
  });
});

describe('refusals', () => {
  const botFile = () => bytesOf(multi(uids.jpegLosslessSv1, 'one fragment, Basic Offset Table'));

  it('a Basic Offset Table of four frames where Number of Frames says three', () => {
    const error = refusal(() => split(botFile(), 3));
    expect(error.payload).toMatchObject({ status: 400, reason: 'malformed' });
    expect(error.payload.detail).toBe(
      'File 2: its Basic Offset Table lists 4 frames, but Number of Frames (0028,0008) says 3.',
    );
  });

  it('an offset that does not point at a fragment', () => {
    const bytes = botFile();
    const element = parse(bytes).elements.x7fe00010;
    // The table's item starts at the element's value; its second entry is 12 bytes further.
    const view = new DataView(bytes.buffer, bytes.byteOffset);
    view.setUint32(
      element.dataOffset + 12,
      view.getUint32(element.dataOffset + 12, true) + 2,
      true,
    );
    const error = refusal(() => split(bytes));
    expect(error.payload.reason).toBe('malformed');
    expect(error.payload.detail).toContain('frame 2 the offset');
    expect(error.payload.detail).toContain('is not where a fragment starts');
  });

  it('fewer fragments than frames, and fragments that no marker tells apart', () => {
    const few = refusal(() => split(bytesOf(multi(uids.rle, 'one fragment, no offset table')), 5));
    expect(few.payload.detail).toBe(
      'File 2: its encapsulated Pixel Data holds 4 fragments for 5 frames; each frame needs at least one.',
    );
    const apart = refusal(() =>
      split(bytesOf(multi(uids.jpegLs, 'several fragments, no offset table')), 3),
    );
    expect(apart.payload.reason).toBe('malformed');
    expect(apart.payload.detail).toContain(
      'cannot be told apart into 3 frames (4 of them open a codestream)',
    );
  });

  it('a file that ends before the Sequence Delimitation Item', () => {
    const bytes = botFile();
    const error = refusal(() => split(bytes.subarray(0, bytes.length - 8)));
    expect(error.payload).toMatchObject({ status: 400, reason: 'truncated' });
  });

  it('a fragment that runs past the end of the bytes', () => {
    // dicom-parser itself throws on such a file ("buffer overrun", which the reader reports as
    // truncation); a data set whose bytes end early stands for any parser that lets it by.
    const dataSet = parse(botFile());
    const cut = {
      ...dataSet,
      byteArray: dataSet.byteArray.subarray(0, dataSet.byteArray.length - 500),
    };
    const error = refusal(() => encapsulatedFrames(cut, dataSet.elements.x7fe00010, 4, 'File 2'));
    expect(error.payload).toMatchObject({ status: 400, reason: 'truncated' });
    expect(error.payload.detail).toBe(
      'File 2 is truncated: fragment 4 of its Pixel Data runs past the end of the file.',
    );
  });

  it('an Extended Offset Table of the wrong length, and one with a Basic Offset Table too', () => {
    const eot = bytesOf(multi(uids.j2kLossless, 'one fragment, Extended Offset Table'));
    const error = refusal(() => split(eot, 5));
    expect(error.payload.detail).toBe(
      'File 2: its Extended Offset Table lists 4 frames, but Number of Frames (0028,0008) says 5.',
    );
    const dataSet = parse(eot);
    dataSet.elements.x7fe00010.basicOffsetTable = [0, 1, 2, 3];
    const both = refusal(() =>
      encapsulatedFrames(dataSet, dataSet.elements.x7fe00010, 4, 'File 2'),
    );
    expect(both.payload.detail).toContain('holds both a Basic and an Extended Offset Table');
  });

  it('Pixel Data that is not encapsulated', () => {
    const dataSet = dicomParser.parseDicom(readFileSync(set.multiFrame.path));
    const error = refusal(() =>
      encapsulatedFrames(dataSet, dataSet.elements.x7fe00010, 4, 'File 2'),
    );
    expect(error.payload.detail).toBe(
      'File 2: its Pixel Data (7FE0,0010) is not encapsulated, as a compressed transfer syntax ' +
        'requires (DICOM PS3.5 A.4).',
    );
  });
});
