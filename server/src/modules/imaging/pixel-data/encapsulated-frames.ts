/**
 * Splits encapsulated Pixel Data (DICOM PS3.5 A.4) into the compressed bytes of each frame.
 * The element holds items: first the Basic Offset Table, then the fragments; offsets (of the
 * Basic or the Extended Offset Table, PS3.5 A.4 and PS3.3 C.7.6.3.1.8, from memory) count
 * from the first byte of the first fragment's item tag. Without a table, one fragment a frame
 * or one frame in all its fragments is plain; a JPEG (or JPEG 2000) frame spread over several
 * fragments is found by the start-of-codestream marker that opens it.
 */
import type { DataSet, Element, Fragment } from 'dicom-parser';
import { refuse } from './refusal';

/** dicom-parser keeps an undefined length when no Sequence Delimitation Item closed the element. */
const undefinedLength = 0xffffffff;

export function encapsulatedFrames(
  dataSet: DataSet,
  element: Element,
  frameCount: number,
  label: string,
): Uint8Array[] {
  const bytes = dataSet.byteArray;
  const fragments = element.fragments;
  if (!element.encapsulatedPixelData || !fragments) {
    refuse(
      400,
      'malformed',
      `${label}: its Pixel Data (7FE0,0010) is not encapsulated, as a compressed transfer syntax ` +
        'requires (DICOM PS3.5 A.4).',
    );
  }
  if (!Number.isInteger(frameCount) || frameCount < 1) {
    refuse(
      400,
      'malformed',
      `${label}: its Number of Frames (0028,0008) is not a positive whole number.`,
    );
  }
  if (element.length === undefinedLength) {
    refuse(
      400,
      'truncated',
      `${label} is truncated: its Pixel Data ends without the Sequence Delimitation Item ` +
        '(FFFE,E0DD) that closes it.',
    );
  }
  fragments.forEach((fragment, index) => checkFragment(bytes, fragment, index, label));
  if (fragments.length === 0) {
    refuse(400, 'malformed', `${label}: its encapsulated Pixel Data holds no fragment.`);
  }

  const extended = extendedOffsetTable(dataSet, label);
  const basic = element.basicOffsetTable ?? [];
  if (extended && basic.length > 0) {
    refuse(
      400,
      'malformed',
      `${label} holds both a Basic and an Extended Offset Table; with an Extended Offset Table ` +
        '(7FE0,0001) the Basic Offset Table must be empty (DICOM PS3.5 A.4).',
    );
  }
  const table = extended?.offsets ?? (basic.length > 0 ? basic : null);
  let starts: number[];
  if (table) {
    if (table.length !== frameCount) {
      refuse(
        400,
        'malformed',
        `${label}: its ${extended ? 'Extended' : 'Basic'} Offset Table lists ${table.length} ` +
          `frame${table.length === 1 ? '' : 's'}, but Number of Frames (0028,0008) says ${frameCount}.`,
      );
    }
    starts = fragmentIndexesAt(table, fragments, extended ? 'Extended' : 'Basic', label);
  } else if (frameCount === 1) {
    starts = [0];
  } else if (fragments.length === frameCount) {
    starts = fragments.map((_, index) => index);
  } else if (fragments.length > frameCount) {
    starts = codestreamStarts(bytes, fragments, frameCount, label);
  } else {
    refuse(
      400,
      'malformed',
      `${label}: its encapsulated Pixel Data holds ${fragments.length} fragment` +
        `${fragments.length === 1 ? '' : 's'} for ${frameCount} frames; each frame needs at least one.`,
    );
  }
  return starts.map((first, frame) => {
    const end = frame + 1 < starts.length ? starts[frame + 1] : fragments.length;
    const data = joinFragments(bytes, fragments.slice(first, end));
    const length = extended?.lengths?.[frame];
    if (length === undefined) return data;
    if (length > data.length) {
      refuse(
        400,
        'malformed',
        `${label}: its Extended Offset Table Lengths (7FE0,0002) give frame ${frame + 1} ` +
          `${length} bytes, more than its fragments hold (${data.length}).`,
      );
    }
    return data.subarray(0, length);
  });
}

function checkFragment(bytes: Uint8Array, fragment: Fragment, index: number, label: string): void {
  // dicom-parser takes anything after the offset table for a fragment: an Item tag
  // (FFFE,E000), little endian, must precede each.
  const at = fragment.position - 8;
  const isItem =
    at >= 0 &&
    bytes[at] === 0xfe &&
    bytes[at + 1] === 0xff &&
    bytes[at + 2] === 0x00 &&
    bytes[at + 3] === 0xe0;
  if (!isItem) {
    refuse(
      400,
      'malformed',
      `${label}: its encapsulated Pixel Data holds something other than an Item where fragment ` +
        `${index + 1} should be.`,
    );
  }
  if (fragment.position + fragment.length > bytes.length) {
    refuse(
      400,
      'truncated',
      `${label} is truncated: fragment ${index + 1} of its Pixel Data runs past the end of the file.`,
    );
  }
}

/** The fragment each offset points at: it must be one's item tag, in increasing order, the first 0. */
function fragmentIndexesAt(
  offsets: readonly number[],
  fragments: readonly Fragment[],
  which: string,
  label: string,
): number[] {
  const indexOfOffset = new Map(fragments.map((fragment, index) => [fragment.offset, index]));
  const starts = offsets.map((offset) => indexOfOffset.get(offset) ?? -1);
  starts.forEach((start, frame) => {
    const isValid = frame === 0 ? start === 0 : start > starts[frame - 1];
    if (!isValid) {
      refuse(
        400,
        'malformed',
        `${label}: its ${which} Offset Table gives frame ${frame + 1} the offset ` +
          `${offsets[frame]}, which ${start < 0 ? 'is not where a fragment starts' : 'is out of order'}.`,
      );
    }
  });
  return starts;
}

/**
 * Without an offset table, where fragments outnumber frames: a fragment whose bytes open with
 * SOI and a marker (JPEG, JPEG-LS: FFD8 FF) or with SOC and SIZ (JPEG 2000: FF4F FF51) starts a
 * frame; within a frame's entropy-coded data these pairs cannot occur (T.81 B.1.1.5, T.87
 * C.1.4; in JPEG 2000 a chance match is checked by the count).
 */
function codestreamStarts(
  bytes: Uint8Array,
  fragments: readonly Fragment[],
  frameCount: number,
  label: string,
): number[] {
  const opensCodestream = (fragment: Fragment) => {
    const at = fragment.position;
    if (fragment.length < 4) return false;
    const isJpeg = bytes[at] === 0xff && bytes[at + 1] === 0xd8 && bytes[at + 2] === 0xff;
    const isJpeg2000 =
      bytes[at] === 0xff &&
      bytes[at + 1] === 0x4f &&
      bytes[at + 2] === 0xff &&
      bytes[at + 3] === 0x51;
    return isJpeg || isJpeg2000;
  };
  const starts = fragments.flatMap((fragment, index) => (opensCodestream(fragment) ? [index] : []));
  if (starts[0] !== 0 || starts.length !== frameCount) {
    refuse(
      400,
      'malformed',
      `${label}: its ${fragments.length} fragments have no offset table and cannot be told apart ` +
        `into ${frameCount} frames (${starts.length} of them open a codestream).`,
    );
  }
  return starts;
}

/**
 * A frame's bytes: a view of the file's bytes when it is one fragment, else a copy. Always a
 * plain Uint8Array, even over a Node Buffer (whose slice() would not copy).
 */
function joinFragments(bytes: Uint8Array, fragments: readonly Fragment[]): Uint8Array {
  if (fragments.length === 1) {
    const [only] = fragments;
    return new Uint8Array(bytes.buffer, bytes.byteOffset + only.position, only.length);
  }
  const total = fragments.reduce((sum, fragment) => sum + fragment.length, 0);
  const joined = new Uint8Array(total);
  let at = 0;
  for (const fragment of fragments) {
    joined.set(bytes.subarray(fragment.position, fragment.position + fragment.length), at);
    at += fragment.length;
  }
  return joined;
}

/** (7FE0,0001) Extended Offset Table and (7FE0,0002) its Lengths: 64-bit unsigned, little endian. */
function extendedOffsetTable(
  dataSet: DataSet,
  label: string,
): { offsets: number[]; lengths: number[] | null } | null {
  const offsets = readVeryLongs(dataSet, 'x7fe00001', 'Extended Offset Table (7FE0,0001)', label);
  if (!offsets || offsets.length === 0) return null;
  const lengths = readVeryLongs(
    dataSet,
    'x7fe00002',
    'Extended Offset Table Lengths (7FE0,0002)',
    label,
  );
  if (lengths && lengths.length !== offsets.length) {
    refuse(
      400,
      'malformed',
      `${label}: its Extended Offset Table lists ${offsets.length} frames but its Lengths ${lengths.length}.`,
    );
  }
  return { offsets, lengths };
}

function readVeryLongs(
  dataSet: DataSet,
  tag: string,
  name: string,
  label: string,
): number[] | null {
  const element = dataSet.elements[tag];
  if (!element || element.length === 0) return null;
  const bytes = dataSet.byteArray;
  if (element.length % 8 !== 0 || element.dataOffset + element.length > bytes.length) {
    refuse(400, 'malformed', `${label}: its ${name} is not a whole number of 64-bit values.`);
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset + element.dataOffset, element.length);
  const values: number[] = [];
  for (let at = 0; at < element.length; at += 8) {
    const value = view.getBigUint64(at, true);
    if (value > BigInt(Number.MAX_SAFE_INTEGER)) {
      refuse(400, 'malformed', `${label}: its ${name} holds a value beyond any file's size.`);
    }
    values.push(Number(value));
  }
  return values;
}
