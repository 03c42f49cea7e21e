/**
 * Reference files for the pixel-data codec tests, made at test time (no binary is committed):
 * slices of the invented sample CT (`sample-data/abdomen/abdomen-ct.ts`) written uncompressed,
 * then compressed by independent encoders, Debian's dcmtk (dcmcjpeg, dcmcjpls, dcmcrle,
 * dcmconv) and OpenJPEG's opj_compress, whose JPEG 2000 codestreams are wrapped here as
 * encapsulated Pixel Data (DICOM PS3.5 A.4) in Part 10 files and also decoded by Debian's
 * opj_decompress, for comparison.
 *
 * Three pixel variants of the same slices:
 * - `sample`: the generator's own files, Pixel Representation 1, Bits Stored 16, HU + 1024
 *   (0…4095, never negative);
 * - `signed`: Pixel Representation 1, Bits Stored 16, HU itself (−1024…3071);
 * - `twelve-bit`: Pixel Representation 0, Bits Stored 12, High Bit 11, HU + 1024.
 * And one multi-frame file (four slices of `sample`) compressed with and without a Basic
 * Offset Table, in one or several fragments a frame, and with an Extended Offset Table.
 *
 * The set is built once into the system's temporary folder, named by a hash of this file and
 * of the uncompressed slices, and reused while both stay the same.
 */
import { createHash } from 'node:crypto';
import { execFileSync } from 'node:child_process';
import {
  existsSync,
  mkdirSync,
  readdirSync,
  readFileSync,
  renameSync,
  rmSync,
  statSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import dcmjs from 'dcmjs';
import { generateAbdomenCt } from '../../sample-data/abdomen/abdomen-ct';

dcmjs.log.setLevel('error');

export type VariantName = 'sample' | 'signed' | 'twelve-bit';

export interface Variant {
  name: VariantName;
  bitsStored: number;
  isSigned: boolean;
  /** The uncompressed originals (Explicit VR Little Endian), one a slice. */
  slices: string[];
}

export type Encapsulation =
  | 'one fragment, Basic Offset Table'
  | 'one fragment, no offset table'
  | 'several fragments, Basic Offset Table'
  | 'several fragments, no offset table'
  | 'one fragment, Extended Offset Table';

export interface ReferenceFile {
  /** For test names: "twelve-bit, JPEG-LS near-lossless (NEAR 2), slice 3". */
  name: string;
  variant: VariantName;
  transferSyntaxUid: string;
  path: string;
  /** Index into the variant's slices of each frame. */
  frames: number[];
  /** The tool and options that made it. */
  madeWith: string;
  /** JPEG-LS near-lossless: the NEAR the encoder was given. */
  near?: number;
  /** Lossy JPEG 2000: the compression ratio opj_compress was given (-r). */
  ratio?: number;
  /** JPEG 2000 with the irreversible 9-7 wavelet (-I). */
  isIrreversible?: boolean;
  /** Multi-frame files: how the frames lie in the encapsulated Pixel Data. */
  encapsulation?: Encapsulation;
  /** JPEG 2000: Debian's opj_decompress's decoding of the codestream (raw, little endian). */
  openJpegDecode?: string;
}

export interface CompressedDicomSet {
  directory: string;
  variants: Record<VariantName, Variant>;
  files: ReferenceFile[];
  /** The multi-frame original and the slices of `sample` its frames are. */
  multiFrame: { path: string; frames: number[] };
}

export const uids = {
  explicitLittle: '1.2.840.10008.1.2.1',
  deflated: '1.2.840.10008.1.2.1.99',
  big: '1.2.840.10008.1.2.2',
  jpegLossless: '1.2.840.10008.1.2.4.57',
  jpegLosslessSv1: '1.2.840.10008.1.2.4.70',
  jpegLs: '1.2.840.10008.1.2.4.80',
  jpegLsNear: '1.2.840.10008.1.2.4.81',
  j2kLossless: '1.2.840.10008.1.2.4.90',
  j2k: '1.2.840.10008.1.2.4.91',
  rle: '1.2.840.10008.1.2.5',
} as const;

/** Four of the 64 slices of the sample CT, spread from the bottom (z = −75 mm) to the top (z = +65 mm). */
const sliceIndexes = [6, 26, 44, 62];
/** The multi-frame file holds the first four of them. */
const multiFrameSlices = [0, 1, 2, 3];
/** NEAR given to dcmcjpls for near-lossless JPEG-LS (its default too). */
export const jpegLsNear = 2;
/** Compression ratio given to opj_compress for lossy JPEG 2000. */
export const jpeg2000Ratio = 10;
/** Fragment size limit (kB) for files whose frames span several fragments. */
const fragmentKilobytes = 4;

const tools = ['dcmcjpeg', 'dcmcjpls', 'dcmcrle', 'dcmconv', 'opj_compress', 'opj_decompress'];

let cached: CompressedDicomSet | null = null;

/** Builds the set (or finds it already built) and answers where everything is. */
export function compressedDicomSet(): CompressedDicomSet {
  if (cached) return cached;
  const missing = tools.filter((tool) => !existsSync(`/usr/bin/${tool}`));
  if (missing.length > 0) {
    throw new Error(
      `${missing.join(', ')} missing: the codec tests need Debian's dcmtk and libopenjp2-tools ` +
        '(`npm test` installs them; or `sudo apt-get install -y dcmtk libopenjp2-tools`).',
    );
  }
  const generated = generateAbdomenCt();
  const originals = sliceIndexes.map((k) => new Uint8Array(generated.slices[k]));
  const hash = createHash('sha256');
  hash.update(readFileSync(fileURLToPath(import.meta.url)));
  hash.update(execFileSync('dcmcjpeg', ['--version'], { encoding: 'utf8' }));
  for (const original of originals) hash.update(original);
  const directory = join(tmpdir(), `emberline-compressed-dicom-${hash.digest('hex').slice(0, 16)}`);
  const manifestPath = join(directory, 'set.json');
  if (!existsSync(manifestPath)) {
    pruneStaleSets(directory);
    const partial = `${directory}.partial-${process.pid}`;
    rmSync(partial, { recursive: true, force: true });
    mkdirSync(partial, { recursive: true });
    const set = build(partial, originals);
    writeFileSync(join(partial, 'set.json'), JSON.stringify(set));
    try {
      renameSync(partial, directory);
    } catch {
      // Another test process built the same set meanwhile: use theirs.
      rmSync(partial, { recursive: true, force: true });
    }
  }
  const relative = JSON.parse(readFileSync(manifestPath, 'utf8')) as CompressedDicomSet;
  cached = withDirectory(relative, directory);
  return cached;
}

/** Sets of earlier versions of this file, untouched for a day, go when a new one is built. */
function pruneStaleSets(current: string): void {
  const prefix = 'emberline-compressed-dicom-';
  const dayAgo = Date.now() - 24 * 3600 * 1000;
  for (const name of readdirSync(tmpdir())) {
    const path = join(tmpdir(), name);
    if (!name.startsWith(prefix) || path === current) continue;
    try {
      if (statSync(path).mtimeMs < dayAgo) rmSync(path, { recursive: true, force: true });
    } catch {
      // Gone already, or not ours to remove: either way nothing to do.
    }
  }
}

/** The manifest holds paths relative to the set's folder. */
function withDirectory(set: CompressedDicomSet, directory: string): CompressedDicomSet {
  const at = (path: string) => join(directory, path);
  const variants = Object.fromEntries(
    Object.entries(set.variants).map(([name, variant]) => [
      name,
      { ...variant, slices: variant.slices.map(at) },
    ]),
  ) as Record<VariantName, Variant>;
  return {
    directory,
    variants,
    files: set.files.map((file) => ({
      ...file,
      path: at(file.path),
      ...(file.openJpegDecode ? { openJpegDecode: at(file.openJpegDecode) } : {}),
    })),
    multiFrame: { ...set.multiFrame, path: at(set.multiFrame.path) },
  };
}

function build(directory: string, originals: Uint8Array[]): CompressedDicomSet {
  const run = (tool: string, args: string[]) =>
    execFileSync(tool, args, { cwd: directory, stdio: ['ignore', 'ignore', 'pipe'] });
  const variants = {} as Record<VariantName, Variant>;
  const files: ReferenceFile[] = [];
  const add = (file: ReferenceFile, tool: string, args: string[]) => {
    run(tool, args);
    files.push(file);
  };

  for (const name of ['sample', 'signed', 'twelve-bit'] as const) {
    const slices = originals.map((original, index) => {
      const path = `${name}-${index + 1}.dcm`;
      writeFileSync(join(directory, path), variantOf(original, name));
      return path;
    });
    const isSigned = name !== 'twelve-bit';
    const bitsStored = name === 'twelve-bit' ? 12 : 16;
    variants[name] = { name, bitsStored, isSigned, slices };

    slices.forEach((input, index) => {
      const made = (suffix: string) => `${name}-${index + 1}.${suffix}.dcm`;
      const file = (what: string, uid: string, path: string, madeWith: string) => ({
        name: `${name}, ${what}, slice ${index + 1}`,
        variant: name,
        transferSyntaxUid: uid,
        path,
        frames: [index],
        madeWith,
      });
      const jpeg = (what: string, uid: string, suffix: string, options: string[]) =>
        add(file(what, uid, made(suffix), `dcmcjpeg ${options.join(' ')}`), 'dcmcjpeg', [
          ...options,
          input,
          made(suffix),
        ]);
      jpeg('JPEG Lossless SV1', uids.jpegLosslessSv1, 'jpeg-sv1', ['+e1']);
      // Process 14 with the other predictors (T.81 Table H.1): all of them on `sample`.
      const predictors = name === 'sample' ? [2, 3, 4, 5, 6, 7] : [6];
      for (const sv of predictors) {
        jpeg(`JPEG Lossless SV${sv}`, uids.jpegLossless, `jpeg-sv${sv}`, ['+el', '+sv', `${sv}`]);
      }
      add(file('JPEG-LS lossless', uids.jpegLs, made('jls'), 'dcmcjpls +el'), 'dcmcjpls', [
        '+el',
        input,
        made('jls'),
      ]);
      // dcmcjpls refuses near-lossless coding of signed pixels ("Unsupported pixel
      // representation"): JPEG-LS codes unsigned samples only.
      if (!isSigned) {
        add(
          {
            ...file(
              `JPEG-LS near-lossless (NEAR ${jpegLsNear})`,
              uids.jpegLsNear,
              made('jls-near'),
              '',
            ),
            madeWith: `dcmcjpls +en +md ${jpegLsNear}`,
            near: jpegLsNear,
          },
          'dcmcjpls',
          ['+en', '+md', `${jpegLsNear}`, input, made('jls-near')],
        );
      }
      add(file('RLE Lossless', uids.rle, made('rle'), 'dcmcrle'), 'dcmcrle', [input, made('rle')]);
      add(file('Explicit VR Big Endian', uids.big, made('big'), 'dcmconv +tb'), 'dcmconv', [
        '+tb',
        input,
        made('big'),
      ]);
      add(
        file('Deflated Explicit VR Little Endian', uids.deflated, made('deflated'), 'dcmconv +td'),
        'dcmconv',
        ['+td', input, made('deflated')],
      );
      const j2k = (
        what: string,
        uid: string,
        suffix: string,
        options: string[],
        extra: Partial<ReferenceFile>,
        format: 'j2k' | 'jp2' = 'j2k',
      ) => {
        const path = made(suffix);
        const codestream = openJpegCodestream(directory, input, `${path}.${format}`, options);
        const openJpegDecode = `${path}.opj.rawl`;
        run('opj_decompress', ['-i', `${path}.${format}`, '-o', openJpegDecode]);
        const original = readFileSync(join(directory, input));
        const ratio = pixelBytes(original) / codestream.length;
        writeFileSync(
          join(directory, path),
          encapsulatedFile(original, uid, [[codestream]], 'one fragment, Basic Offset Table', {
            lossyRatio: extra.ratio ? ratio : null,
          }),
        );
        files.push({
          ...file(what, uid, path, `opj_compress ${options.join(' ')}`),
          ...extra,
          openJpegDecode,
        });
      };
      j2k('JPEG 2000 lossless', uids.j2kLossless, 'j2k', [], {});
      if (name === 'sample' && index === 0) {
        // A JP2 file rather than a bare codestream: not allowed in DICOM (PS3.5 A.4.4), seen.
        j2k('JPEG 2000 lossless in a JP2 file', uids.j2kLossless, 'jp2', [], {}, 'jp2');
      }
      j2k(
        `JPEG 2000 irreversible, ratio ${jpeg2000Ratio}`,
        uids.j2k,
        'j2k-97',
        ['-I', '-r', `${jpeg2000Ratio}`],
        { ratio: jpeg2000Ratio, isIrreversible: true },
      );
      j2k(
        `JPEG 2000 reversible wavelet, ratio ${jpeg2000Ratio}`,
        uids.j2k,
        'j2k-53',
        ['-r', `${jpeg2000Ratio}`],
        { ratio: jpeg2000Ratio, isIrreversible: false },
      );
    });
  }

  const multiFrame = multiFrameFile(
    multiFrameSlices.map((index) => readFileSync(join(directory, variants.sample.slices[index]))),
  );
  const multiPath = 'sample-multi-frame.dcm';
  writeFileSync(join(directory, multiPath), multiFrame);
  const multi = (
    what: string,
    uid: string,
    suffix: string,
    tool: string,
    options: string[],
    encapsulation: Encapsulation,
  ) => {
    const path = `sample-multi-frame.${suffix}.dcm`;
    add(
      {
        name: `sample, ${multiFrameSlices.length} frames, ${what}, ${encapsulation}`,
        variant: 'sample',
        transferSyntaxUid: uid,
        path,
        frames: multiFrameSlices,
        madeWith: `${tool} ${options.join(' ')}`,
        encapsulation,
      },
      tool,
      [...options, multiPath, path],
    );
  };
  const fragments = ['+fs', `${fragmentKilobytes}`];
  for (const [what, uid, tool, process] of [
    ['JPEG Lossless SV1', uids.jpegLosslessSv1, 'dcmcjpeg', '+e1'],
    ['JPEG-LS lossless', uids.jpegLs, 'dcmcjpls', '+el'],
  ] as const) {
    const key = tool === 'dcmcjpeg' ? 'jpeg' : 'jls';
    multi(what, uid, `${key}-bot`, tool, [process], 'one fragment, Basic Offset Table');
    multi(what, uid, `${key}-nobot`, tool, [process, '-ot'], 'one fragment, no offset table');
    multi(
      what,
      uid,
      `${key}-frag-bot`,
      tool,
      [process, ...fragments],
      'several fragments, Basic Offset Table',
    );
    multi(
      what,
      uid,
      `${key}-frag-nobot`,
      tool,
      [process, '-ot', ...fragments],
      'several fragments, no offset table',
    );
  }
  multi('RLE Lossless', uids.rle, 'rle-bot', 'dcmcrle', [], 'one fragment, Basic Offset Table');
  multi('RLE Lossless', uids.rle, 'rle-nobot', 'dcmcrle', ['-ot'], 'one fragment, no offset table');

  // JPEG 2000 frames, wrapped here in each of the ways the standard allows.
  const codestreams = multiFrameSlices.map((index) =>
    openJpegCodestream(directory, variants.sample.slices[index], `multi-${index}.j2k`, []),
  );
  const multiOriginal = new Uint8Array(multiFrame);
  const wrapped: [Encapsulation, Uint8Array[][]][] = [
    ['one fragment, Basic Offset Table', codestreams.map((codestream) => [codestream])],
    ['one fragment, no offset table', codestreams.map((codestream) => [codestream])],
    ['one fragment, Extended Offset Table', codestreams.map((codestream) => [codestream])],
    [
      'several fragments, no offset table',
      codestreams.map((codestream) => splitInto(codestream, 3)),
    ],
    [
      'several fragments, Basic Offset Table',
      codestreams.map((codestream) => splitInto(codestream, 3)),
    ],
  ];
  wrapped.forEach(([encapsulation, frames], index) => {
    const path = `sample-multi-frame.j2k-${index + 1}.dcm`;
    writeFileSync(
      join(directory, path),
      encapsulatedFile(multiOriginal, uids.j2kLossless, frames, encapsulation, {
        lossyRatio: null,
      }),
    );
    files.push({
      name: `sample, ${multiFrameSlices.length} frames, JPEG 2000 lossless, ${encapsulation}`,
      variant: 'sample',
      transferSyntaxUid: uids.j2kLossless,
      path,
      frames: multiFrameSlices,
      madeWith: 'opj_compress, wrapped by test/support/compressed-dicom.ts',
      encapsulation,
    });
  });
  return {
    directory: '',
    variants,
    files,
    multiFrame: { path: multiPath, frames: multiFrameSlices },
  };
}

type Dataset = Record<string, { vr: string; Value?: unknown[]; InlineBinary?: string }>;

function readDataset(bytes: Uint8Array): { meta: Dataset; dict: Dataset } {
  const buffer = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength);
  const file = dcmjs.data.DicomMessage.readFile(buffer as ArrayBuffer);
  return { meta: file.meta, dict: file.dict };
}

function writeDataset(meta: Dataset, dict: Dataset): Uint8Array {
  const file = new dcmjs.data.DicomDict(meta);
  file.dict = dict;
  return new Uint8Array(file.write());
}

function pixelArray(dict: Dataset): ArrayBuffer {
  return dict['7FE00010'].Value?.[0] as ArrayBuffer;
}

function pixelBytes(file: Uint8Array): number {
  return pixelArray(readDataset(file).dict).byteLength;
}

/** One of the three pixel variants of a generator slice (see the top of this file). */
export function variantOf(original: Uint8Array, name: VariantName): Uint8Array {
  if (name === 'sample') return original;
  const { meta, dict } = readDataset(original);
  const stored = new Int16Array(pixelArray(dict));
  const pixels = new Int16Array(stored.length);
  if (name === 'signed') {
    // HU itself: stored + Rescale Intercept (−1024).
    for (let index = 0; index < stored.length; index++) pixels[index] = stored[index] - 1024;
    dict['00281052'] = { vr: 'DS', Value: ['0'] };
  } else {
    pixels.set(stored);
    dict['00280101'] = { vr: 'US', Value: [12] };
    dict['00280102'] = { vr: 'US', Value: [11] };
    dict['00280103'] = { vr: 'US', Value: [0] };
  }
  dict['7FE00010'] = { vr: 'OW', Value: [pixels.buffer] };
  return writeDataset(meta, dict);
}

/** Frames of the same size as one uncompressed multi-frame file (Number of Frames set). */
function multiFrameFile(slices: Uint8Array[]): Uint8Array {
  const datasets = slices.map(readDataset);
  const { meta, dict } = datasets[0];
  const frames = datasets.map(({ dict: slice }) => new Uint8Array(pixelArray(slice)));
  const all = new Uint8Array(frames.reduce((sum, frame) => sum + frame.length, 0));
  frames.forEach((frame, index) => all.set(frame, index * frame.length));
  dict['00280008'] = { vr: 'IS', Value: [String(frames.length)] };
  dict['7FE00010'] = { vr: 'OW', Value: [all.buffer] };
  return writeDataset(meta, dict);
}

/** opj_compress on the stored values of an uncompressed file (raw, little endian). */
export function openJpegCodestream(
  directory: string,
  input: string,
  output: string,
  options: string[],
): Uint8Array {
  const { dict } = readDataset(readFileSync(join(directory, input)));
  const bitsStored = dict['00280101'].Value?.[0] as number;
  const isSigned = dict['00280103'].Value?.[0] === 1;
  const rows = dict['00280010'].Value?.[0] as number;
  const columns = dict['00280011'].Value?.[0] as number;
  const raw = `${output}.rawl`;
  writeFileSync(join(directory, raw), new Uint8Array(pixelArray(dict)));
  const format = `${columns},${rows},1,${bitsStored},${isSigned ? 's' : 'u'}`;
  execFileSync('opj_compress', ['-i', raw, '-o', output, '-F', format, ...options], {
    cwd: directory,
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  const codestream = new Uint8Array(readFileSync(join(directory, output)));
  rmSync(join(directory, raw));
  return codestream;
}

/** Splits a codestream into `parts` pieces of even length (PS3.5 A.4: items have even lengths). */
function splitInto(codestream: Uint8Array, parts: number): Uint8Array[] {
  const padded = codestream.length % 2 === 0 ? codestream : concat([codestream, new Uint8Array(1)]);
  const size = Math.ceil(padded.length / parts / 2) * 2;
  const pieces: Uint8Array[] = [];
  for (let at = 0; at < padded.length; at += size) pieces.push(padded.subarray(at, at + size));
  return pieces;
}

function concat(parts: Uint8Array[]): Uint8Array {
  const all = new Uint8Array(parts.reduce((sum, part) => sum + part.length, 0));
  let at = 0;
  for (const part of parts) {
    all.set(part, at);
    at += part.length;
  }
  return all;
}

/** Tag, then VR and reserved bytes (explicit VR, 4-byte length), little endian. */
function elementHeader(group: number, element: number, vr: string, length: number): Uint8Array {
  const header = new Uint8Array(12);
  const view = new DataView(header.buffer);
  view.setUint16(0, group, true);
  view.setUint16(2, element, true);
  header[4] = vr.charCodeAt(0);
  header[5] = vr.charCodeAt(1);
  view.setUint32(8, length, true);
  return header;
}

function item(tagElement: number, length: number): Uint8Array {
  const bytes = new Uint8Array(8);
  const view = new DataView(bytes.buffer);
  view.setUint16(0, 0xfffe, true);
  view.setUint16(2, tagElement, true);
  view.setUint32(4, length, true);
  return bytes;
}

/**
 * The original file's data set with `frames` (each a list of fragments, of even length) as
 * encapsulated Pixel Data (PS3.5 A.4): (7FE0,0010) OB of undefined length, the Basic Offset
 * Table item, one item a fragment, the Sequence Delimitation Item. With an Extended Offset
 * Table, (7FE0,0001) and (7FE0,0002), OV, come before it and the Basic Offset Table is empty.
 */
function encapsulatedFile(
  original: Uint8Array,
  transferSyntaxUid: string,
  frames: Uint8Array[][],
  encapsulation: Encapsulation,
  lossy: { lossyRatio: number | null },
): Uint8Array {
  const { meta, dict } = readDataset(original);
  delete dict['7FE00010'];
  meta['00020010'] = { vr: 'UI', Value: [transferSyntaxUid] };
  if (lossy.lossyRatio !== null) {
    dict['00282110'] = { vr: 'CS', Value: ['01'] };
    dict['00282112'] = { vr: 'DS', Value: [lossy.lossyRatio.toFixed(2)] };
    dict['00282114'] = { vr: 'CS', Value: ['ISO_15444_1'] };
  }
  const evenFrames = frames.map((fragments) =>
    fragments.map((fragment) =>
      fragment.length % 2 === 0 ? fragment : concat([fragment, new Uint8Array(1)]),
    ),
  );
  // Offsets from the first byte of the first fragment's item tag to each frame's first one.
  const offsets: number[] = [];
  const lengths: number[] = [];
  let offset = 0;
  for (const fragments of evenFrames) {
    offsets.push(offset);
    lengths.push(fragments.reduce((sum, fragment) => sum + fragment.length, 0));
    offset += fragments.reduce((sum, fragment) => sum + 8 + fragment.length, 0);
  }
  const parts: Uint8Array[] = [writeDataset(meta, dict)];
  const veryLongs = (values: number[]) => {
    const bytes = new Uint8Array(values.length * 8);
    const view = new DataView(bytes.buffer);
    values.forEach((value, index) => view.setBigUint64(index * 8, BigInt(value), true));
    return bytes;
  };
  if (encapsulation === 'one fragment, Extended Offset Table') {
    parts.push(elementHeader(0x7fe0, 0x0001, 'OV', offsets.length * 8), veryLongs(offsets));
    parts.push(elementHeader(0x7fe0, 0x0002, 'OV', lengths.length * 8), veryLongs(lengths));
  }
  parts.push(elementHeader(0x7fe0, 0x0010, 'OB', 0xffffffff));
  const hasBasicTable = encapsulation.endsWith('Basic Offset Table');
  const table = new Uint8Array(hasBasicTable ? offsets.length * 4 : 0);
  offsets.forEach((value, index) => {
    if (hasBasicTable) new DataView(table.buffer).setUint32(index * 4, value, true);
  });
  parts.push(item(0xe000, table.length), table);
  for (const fragments of evenFrames) {
    for (const fragment of fragments) parts.push(item(0xe000, fragment.length), fragment);
  }
  parts.push(item(0xe0dd, 0));
  return concat(parts);
}

/**
 * What the caller of `decodeFrame` does with its values (DICOM PS3.5 8.1.1, PS3.3 C.7.6.3.1):
 * keeps the low Bits Stored bits and, for signed pixels, reads them as two's complement.
 */
export function storedValues(
  values: ArrayLike<number>,
  bitsStored: number,
  isSigned: boolean,
): Int32Array {
  const mask = 2 ** bitsStored - 1;
  const signBit = 2 ** (bitsStored - 1);
  const stored = new Int32Array(values.length);
  for (let index = 0; index < values.length; index++) {
    const value = values[index] & mask;
    stored[index] = isSigned && value >= signBit ? value - 2 * signBit : value;
  }
  return stored;
}

/** The stored values of an uncompressed original (Explicit VR Little Endian, one frame). */
export function originalValues(path: string): Int32Array {
  const { dict } = readDataset(readFileSync(path));
  const bitsStored = dict['00280101'].Value?.[0] as number;
  const isSigned = dict['00280103'].Value?.[0] === 1;
  return storedValues(new Uint16Array(pixelArray(dict)), bitsStored, isSigned);
}
