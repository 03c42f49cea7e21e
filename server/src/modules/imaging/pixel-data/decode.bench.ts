/**
 * Decoding speed of each compressed transfer syntax on clinical-size slices. Not a test: run it
 * and read the figures (README.md of this folder keeps the last ones).
 *
 *   node --import tsx server/src/modules/imaging/pixel-data/decode.bench.ts [slices]
 *
 * The invented CT on its clinical grid (512 × 512 × 240, `CLINICAL_GRID`), of which `slices`
 * (default 40) from the middle, as 12-bit unsigned pixels (the test support's `twelve-bit`
 * variant: Bits Stored 12, Pixel Representation 0, as many CT scanners write), compressed by
 * Debian's dcmtk and opj_compress as in the tests. Files are cached in the temporary folder.
 * Timed: `decodeFrame` alone, after one warm-up round, best of three rounds. MB = 10⁶ bytes of
 * decoded pixels (512 × 512 × 2 bytes a slice).
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import dicomParser from 'dicom-parser';
import { generateAbdomenCt } from '../../../../../sample-data/abdomen/abdomen-ct';
import { CLINICAL_GRID } from '../../../../../sample-data/abdomen/grid';
import { openJpegCodestream, variantOf } from '../../../../../test/support/compressed-dicom';
import {
  decodeFrame,
  encapsulatedFrames,
  initialiseCodecs,
  transferSyntaxes,
  wasmMemoryBytes,
  type FrameLayout,
} from './index';

const sliceCount = Number(process.argv[2] ?? 40);
const rounds = 3;

interface Case {
  name: string;
  uid: string;
  /** Makes `output` from the uncompressed `input`, both in `directory`. */
  make: (directory: string, input: string, output: string) => void;
  /** The file is a bare JPEG 2000 codestream, not DICOM. */
  isCodestream?: boolean;
}

const tool =
  (name: string, options: string[]) => (directory: string, input: string, output: string) =>
    execFileSync(name, [...options, input, output], { cwd: directory, stdio: 'ignore' });
const openJpeg = (options: string[]) => (directory: string, input: string, output: string) => {
  const codestream = openJpegCodestream(directory, input, `${output}.tmp.j2k`, options);
  writeFileSync(join(directory, output), codestream);
  rmSync(join(directory, `${output}.tmp.j2k`));
};

const cases: Case[] = [
  { name: 'JPEG Lossless SV1', uid: '1.2.840.10008.1.2.4.70', make: tool('dcmcjpeg', ['+e1']) },
  {
    name: 'JPEG Lossless SV6',
    uid: '1.2.840.10008.1.2.4.57',
    make: tool('dcmcjpeg', ['+el', '+sv', '6']),
  },
  { name: 'JPEG-LS lossless', uid: '1.2.840.10008.1.2.4.80', make: tool('dcmcjpls', ['+el']) },
  {
    name: 'JPEG-LS NEAR 2',
    uid: '1.2.840.10008.1.2.4.81',
    make: tool('dcmcjpls', ['+en', '+md', '2']),
  },
  {
    name: 'JPEG 2000 lossless',
    uid: '1.2.840.10008.1.2.4.90',
    make: openJpeg([]),
    isCodestream: true,
  },
  {
    name: 'JPEG 2000 9-7, ratio 10',
    uid: '1.2.840.10008.1.2.4.91',
    make: openJpeg(['-I', '-r', '10']),
    isCodestream: true,
  },
  { name: 'RLE Lossless', uid: '1.2.840.10008.1.2.5', make: tool('dcmcrle', []) },
];

const folder = join(tmpdir(), `emberline-decode-bench-${sliceCount}`);

function prepare(): void {
  if (existsSync(folder)) return;
  const started = performance.now();
  process.stdout.write(`Generating the clinical-grid CT and compressing ${sliceCount} slices…\n`);
  const partial = `${folder}.partial-${process.pid}`;
  rmSync(partial, { recursive: true, force: true });
  mkdirSync(partial, { recursive: true });
  const generated = generateAbdomenCt({ grid: CLINICAL_GRID });
  const first = Math.floor((CLINICAL_GRID.slices - sliceCount) / 2);
  for (let index = 0; index < sliceCount; index++) {
    const original = variantOf(new Uint8Array(generated.slices[first + index]), 'twelve-bit');
    writeFileSync(join(partial, `slice-${index}.dcm`), original);
  }
  for (const item of cases) {
    for (let index = 0; index < sliceCount; index++) {
      item.make(partial, `slice-${index}.dcm`, `slice-${index}.${cases.indexOf(item)}.out`);
    }
  }
  // Whole or not at all: the folder appears only once every file is made.
  renameSync(partial, folder);
  process.stdout.write(
    `…ready in ${((performance.now() - started) / 1000).toFixed(0)} s (${folder}).\n`,
  );
}

function framesOf(item: Case): Uint8Array[] {
  return Array.from({ length: sliceCount }, (_, index) => {
    const bytes = new Uint8Array(
      readFileSync(join(folder, `slice-${index}.${cases.indexOf(item)}.out`)),
    );
    if (item.isCodestream) return bytes;
    const dataSet = dicomParser.parseDicom(bytes);
    return encapsulatedFrames(dataSet, dataSet.elements.x7fe00010, 1, 'File 1')[0];
  });
}

await initialiseCodecs();
prepare();
const layout: FrameLayout = {
  rows: CLINICAL_GRID.rows,
  columns: CLINICAL_GRID.columns,
  bitsAllocated: 16,
  bitsStored: 12,
  isSigned: false,
  label: 'File 1',
};
const sliceBytes = layout.rows * layout.columns * 2;
const rows: string[][] = [];
for (const item of cases) {
  const syntax = transferSyntaxes.get(item.uid);
  if (!syntax) throw new Error(item.uid);
  const frames = framesOf(item);
  const compressed = frames.reduce((sum, frame) => sum + frame.length, 0);
  for (const frame of frames) decodeFrame(syntax, frame, layout);
  let best = Infinity;
  for (let round = 0; round < rounds; round++) {
    const started = performance.now();
    for (const frame of frames) decodeFrame(syntax, frame, layout);
    best = Math.min(best, performance.now() - started);
  }
  const seconds = best / 1000;
  rows.push([
    item.name,
    item.uid,
    ((sliceBytes * sliceCount) / compressed).toFixed(1),
    (best / sliceCount).toFixed(1),
    (sliceCount / seconds).toFixed(0),
    ((sliceBytes * sliceCount) / 1e6 / seconds).toFixed(1),
  ]);
}

const header = ['syntax', 'UID', 'ratio', 'ms/slice', 'slices/s', 'MB/s'];
const widths = header.map((title, column) =>
  Math.max(title.length, ...rows.map((row) => row[column].length)),
);
const line = (cells: string[]) =>
  `| ${cells.map((cell, column) => (column < 2 ? cell.padEnd(widths[column]) : cell.padStart(widths[column]))).join(' | ')} |`;
process.stdout.write(
  `\n${sliceCount} slices of ${layout.columns} × ${layout.rows}, Node ${process.version}:\n\n`,
);
process.stdout.write(`${line(header)}\n`);
process.stdout.write(
  `| ${widths.map((width, column) => (column < 2 ? '-'.repeat(width) : `${'-'.repeat(width - 1)}:`)).join(' | ')} |\n`,
);
for (const row of rows) process.stdout.write(`${line(row)}\n`);
const memory = wasmMemoryBytes();
process.stdout.write(
  `\nWebAssembly memory after the run: CharLS ${memory.charls / 2 ** 20} MiB, OpenJPEG ${memory.openjpeg / 2 ** 20} MiB.\n`,
);
