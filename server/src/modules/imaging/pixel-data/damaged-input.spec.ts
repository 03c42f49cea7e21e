/**
 * Damaged codestreams: for each codec, a few hundred mutations of a real frame (from the
 * dcmtk and opj_compress reference files), drawn with a seeded generator so a failure can be
 * replayed. What must hold:
 * - a frame cut short is always refused (InstanceRefusal: 400 truncated or malformed);
 * - flipped bits and removed spans end in an InstanceRefusal or in a frame of the right size,
 *   never in another exception and never in a hang. None of these codestreams carries a
 *   checksum: a flipped bit inside entropy-coded data can decode to other values undetected
 *   (integrity of the bytes in transit is the transport's job, not the codec's);
 * - after any failure the codec still decodes the intact frame exactly.
 */
import { readFileSync } from 'node:fs';
import dicomParser from 'dicom-parser';
import { beforeAll, describe, expect, it } from 'vitest';
import { SeededRandom } from '../../../../../sample-data/abdomen/rng';
import {
  compressedDicomSet,
  uids,
  type ReferenceFile,
} from '../../../../../test/support/compressed-dicom';
import { InstanceRefusal } from '../dicom-instance-reader';
import {
  decodeFrame,
  encapsulatedFrames,
  initialiseCodecs,
  transferSyntaxes,
  type DecodedFrame,
  type FrameLayout,
} from './index';

const set = compressedDicomSet();

beforeAll(async () => {
  await initialiseCodecs();
});

const mutationsPerKind = 100;
/** Far above any decode of these 160 × 192 frames (a few ms): only a runaway loop reaches it. */
const maxDecodeMs = 5000;

interface Subject {
  name: string;
  uid: string;
  frame: Uint8Array;
  layout: FrameLayout;
}

function subject(name: string, find: (file: ReferenceFile) => boolean): Subject {
  const file = set.files.find((candidate) => candidate.frames.length === 1 && find(candidate));
  if (!file) throw new Error(`no reference file for ${name}`);
  const dataSet = dicomParser.parseDicom(readFileSync(file.path));
  const [frame] = encapsulatedFrames(dataSet, dataSet.elements.x7fe00010, 1, 'File 4');
  return {
    name,
    uid: file.transferSyntaxUid,
    frame: frame.slice(),
    layout: {
      rows: dataSet.uint16('x00280010') ?? 0,
      columns: dataSet.uint16('x00280011') ?? 0,
      bitsAllocated: 16,
      bitsStored: dataSet.uint16('x00280101') ?? 0,
      isSigned: dataSet.uint16('x00280103') === 1,
      label: 'File 4',
    },
  };
}

const slice = (variant: string, what: string) => (file: ReferenceFile) =>
  file.variant === variant && file.name.includes(what) && file.name.endsWith('slice 2');

const subjects = [
  subject('JPEG Lossless SV1', slice('sample', 'JPEG Lossless SV1')),
  subject('JPEG Lossless SV6', slice('signed', 'JPEG Lossless SV6')),
  subject('JPEG-LS lossless', slice('sample', 'JPEG-LS lossless')),
  subject('JPEG-LS near-lossless', slice('twelve-bit', 'JPEG-LS near-lossless')),
  subject('JPEG 2000 lossless', slice('signed', 'JPEG 2000 lossless')),
  subject('JPEG 2000 irreversible', slice('twelve-bit', 'JPEG 2000 irreversible')),
  subject('RLE Lossless', slice('sample', 'RLE Lossless')),
];

type Outcome =
  { kind: 'refused'; refusal: InstanceRefusal } | { kind: 'decoded'; frame: DecodedFrame };

function attempt(item: Subject, bytes: Uint8Array): Outcome {
  const syntax = transferSyntaxes.get(item.uid);
  if (!syntax) throw new Error(item.uid);
  const started = performance.now();
  try {
    return { kind: 'decoded', frame: decodeFrame(syntax, bytes, item.layout) };
  } catch (error) {
    // Anything but an InstanceRefusal fails the test here, with the mutation in view.
    expect(error).toBeInstanceOf(InstanceRefusal);
    return { kind: 'refused', refusal: error as InstanceRefusal };
  } finally {
    expect(performance.now() - started).toBeLessThan(maxDecodeMs);
  }
}

/** The shortest prefix that still decodes: what follows it is padding. */
function essentialLength(item: Subject): number {
  let length = item.frame.length;
  while (length > 1 && attempt(item, item.frame.subarray(0, length - 1)).kind === 'decoded')
    length--;
  return length;
}

describe.each(subjects.map((item) => [item.name, item] as const))('%s', (_, item) => {
  const seed = 0x5eed0000 + subjects.indexOf(item);

  it('decodes the intact frame (the baseline every mutation departs from)', () => {
    expect(attempt(item, item.frame).kind).toBe('decoded');
  });

  it(`refuses every one of ${mutationsPerKind} truncations`, () => {
    const random = new SeededRandom(seed);
    const essential = essentialLength(item);
    expect(item.frame.length - essential).toBeLessThanOrEqual(2);
    for (let index = 0; index < mutationsPerKind; index++) {
      const cut = Math.floor(random.nextUnit() * essential);
      const outcome = attempt(item, item.frame.subarray(0, cut));
      expect(outcome.kind, `cut at ${cut} of ${item.frame.length}`).toBe('refused');
      if (outcome.kind === 'refused') {
        expect(outcome.refusal.payload.status).toBe(400);
        expect(['truncated', 'malformed']).toContain(outcome.refusal.payload.reason);
        expect(outcome.refusal.payload.detail).toMatch(/^File 4\b/);
      }
    }
  });

  const mutations = {
    'bit flips (1 to 4 bits, a fifth of them in the headers)': (
      bytes: Uint8Array,
      random: SeededRandom,
    ) => {
      const flips = 1 + Math.floor(random.nextUnit() * 4);
      // One mutation in five hits the first 128 bytes, where the marker segments lie.
      const within = random.nextUnit() < 0.2 ? Math.min(128, bytes.length) : bytes.length;
      for (let flip = 0; flip < flips; flip++) {
        const at = Math.floor(random.nextUnit() * within);
        bytes[at] ^= 1 << Math.floor(random.nextUnit() * 8);
      }
      return bytes;
    },
    'removed spans (1 to 64 bytes)': (bytes: Uint8Array, random: SeededRandom) => {
      const from = Math.floor(random.nextUnit() * bytes.length);
      const span = 1 + Math.floor(random.nextUnit() * 64);
      return Uint8Array.from([...bytes.subarray(0, from), ...bytes.subarray(from + span)]);
    },
  };

  it.each(Object.entries(mutations))(
    `ends ${mutationsPerKind} %s in a refusal or a whole frame`,
    (kind, mutate) => {
      const random = new SeededRandom(seed + (kind.startsWith('bit') ? 1000 : 2000));
      const count = item.layout.rows * item.layout.columns;
      let refused = 0;
      for (let index = 0; index < mutationsPerKind; index++) {
        const outcome = attempt(item, mutate(item.frame.slice(), random));
        if (outcome.kind === 'refused') {
          refused++;
          expect([400, 415]).toContain(outcome.refusal.payload.status);
          expect(outcome.refusal.payload.detail).toMatch(/^File 4\b/);
        } else {
          expect(outcome.frame.values.length).toBe(count);
        }
      }
      // Some mutations must have been caught, or the checks above were never exercised.
      expect(refused).toBeGreaterThan(0);
      // And the codec is still sound: the intact frame decodes to the same values as before.
      const first = attempt(item, item.frame);
      const again = attempt(item, item.frame);
      expect(first.kind === 'decoded' && again.kind === 'decoded').toBe(true);
      if (first.kind === 'decoded' && again.kind === 'decoded') {
        expect([...again.frame.values]).toEqual([...first.frame.values]);
      }
    },
    // Each failure of a WebAssembly codec makes a fresh instance (~10–40 ms): generous time.
    120_000,
  );
});

describe("a codestream whose image is not the header's", () => {
  it.each(subjects.map((item) => [item.name, item] as const))(
    '%s: refused when the header says other rows and columns',
    (_, item) => {
      // RLE has no image size of its own: swapped sizes hold as many bytes, so it is given one
      // row more, which its segments do not fill.
      const isRle = item.uid === uids.rle;
      const other = isRle
        ? { ...item.layout, rows: item.layout.rows + 1 }
        : { ...item.layout, rows: item.layout.columns, columns: item.layout.rows };
      const outcome = attempt({ ...item, layout: other }, item.frame);
      expect(outcome.kind).toBe('refused');
      if (outcome.kind === 'refused') {
        expect(outcome.refusal.payload.reason).toBe('malformed');
        expect(outcome.refusal.payload.detail).toContain(
          isRle ? 'RLE segment 1 ends after' : 'codestream is 192 columns × 160 rows',
        );
      }
    },
  );
});
