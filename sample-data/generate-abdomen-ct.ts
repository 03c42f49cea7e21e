/**
 * Writes the invented abdominal CT to a folder:
 *
 *   node --import tsx sample-data/generate-abdomen-ct.ts [--clinical] [outDir]
 *
 * outDir defaults to sample-data/out/ (git-ignored); with `--clinical` the same anatomy is
 * written on the clinical-size grid (512 × 512 × 240 voxels of 0.7 × 0.7 × 1.25 mm, about
 * 125 MB of slices) to sample-data/out-clinical/ (git-ignored), for benchmarks. It receives dicom/slice-001.dcm…,
 * labels.nii.gz, labels.json and manifest.json; earlier slice files there are replaced.
 */
import { mkdir, readdir, rm, writeFile } from 'node:fs/promises';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import {
  DICOM_DIRECTORY,
  LABEL_MAP_FILE_NAME,
  LABELS_FILE_NAME,
  MANIFEST_FILE_NAME,
  generateAbdomenCt,
  type AbdomenCtOptions,
} from './abdomen/abdomen-ct';
import { CLINICAL_GRID } from './abdomen/grid';

export { generateAbdomenCt } from './abdomen/abdomen-ct';
export type { AbdomenCtOptions, GeneratedAbdomenCt } from './abdomen/abdomen-ct';

/** sample-data/out/, beside this file. */
export const DEFAULT_OUT_DIRECTORY = fileURLToPath(new URL('./out/', import.meta.url));
/** sample-data/out-clinical/, beside this file. */
export const CLINICAL_OUT_DIRECTORY = fileURLToPath(new URL('./out-clinical/', import.meta.url));

const SLICE_FILE = /^slice-\d{3}\.dcm$/;

/** Generates and writes everything; answers the files written, relative paths with sizes. */
export async function writeAbdomenCt(
  outDirectory: string = DEFAULT_OUT_DIRECTORY,
  options: AbdomenCtOptions = {},
): Promise<{ path: string; bytes: number }[]> {
  const generated = generateAbdomenCt(options);
  const dicomDirectory = join(outDirectory, DICOM_DIRECTORY);
  await mkdir(dicomDirectory, { recursive: true });
  // Only our own slice files go: a run with fewer slices must not leave stale ones behind.
  for (const name of await readdir(dicomDirectory)) {
    if (SLICE_FILE.test(name)) await rm(join(dicomDirectory, name));
  }
  const files: { path: string; content: Uint8Array }[] = [
    ...generated.slices.map((slice, index) => ({
      path: generated.sliceFileNames[index],
      content: new Uint8Array(slice),
    })),
    { path: LABEL_MAP_FILE_NAME, content: generated.labelMapNiftiGz },
    { path: LABELS_FILE_NAME, content: jsonBytes(generated.labels) },
    { path: MANIFEST_FILE_NAME, content: jsonBytes(generated.manifest) },
  ];
  for (const file of files) {
    await mkdir(dirname(join(outDirectory, file.path)), { recursive: true });
    await writeFile(join(outDirectory, file.path), file.content);
  }
  return files.map((file) => ({ path: file.path, bytes: file.content.byteLength }));
}

/** Indented JSON with arrays of numbers kept on one line (coordinates stay readable). */
function jsonBytes(value: unknown): Uint8Array {
  const text = JSON.stringify(value, null, 2).replace(
    /\[\s*(-?\d[\d.e+-]*(?:,\s*-?\d[\d.e+-]*)*)\s*\]/g,
    (_match, numbers: string) => `[${numbers.split(/,\s*/).join(', ')}]`,
  );
  return new TextEncoder().encode(`${text}\n`);
}

async function main(): Promise<void> {
  const isClinical = process.argv.includes('--clinical');
  const named = process.argv.slice(2).find((argument) => !argument.startsWith('--'));
  const outDirectory = resolve(
    named ?? (isClinical ? CLINICAL_OUT_DIRECTORY : DEFAULT_OUT_DIRECTORY),
  );
  const startedMs = performance.now();
  const files = await writeAbdomenCt(outDirectory, isClinical ? { grid: CLINICAL_GRID } : {});
  const elapsedS = (performance.now() - startedMs) / 1000;
  const slices = files.filter((file) => file.path.startsWith(`${DICOM_DIRECTORY}/`));
  const others = files.filter((file) => !file.path.startsWith(`${DICOM_DIRECTORY}/`));
  const sliceBytes = slices.reduce((sum, file) => sum + file.bytes, 0);
  console.log(`Invented abdominal CT written to ${outDirectory} in ${elapsedS.toFixed(1)} s:`);
  console.log(`  ${DICOM_DIRECTORY}/  ${slices.length} slices, ${kibibytes(sliceBytes)}`);
  for (const file of others) console.log(`  ${file.path}  ${kibibytes(file.bytes)}`);
}

function kibibytes(bytes: number): string {
  return `${(bytes / 1024).toFixed(1)} KiB`;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  await main();
}
