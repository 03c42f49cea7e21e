import { mkdirSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import {
  decodeVolumeFile,
  seriesVolumeGeometry,
  voxelToLps,
  type ImageSeriesView,
  type ProblemDetails,
  type Vec3,
} from '@emberline/shared';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import {
  buildSeries,
  cross,
  defaultStoredValue,
  implicitLittleEndian,
  part10,
  seriesSpec,
  setEnvironment,
  sliceDataset,
  slicePosition,
  uploadFiles,
  originalUid,
  type SeriesSpec,
} from './imaging-fixtures';

const GEOMETRY = 'DICOM PS3.3 C.7.6.2.1.1';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-imaging-geometry-'));
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'imaging-geometry-secret-5d1e8b3f0a7c2e96',
  IMAGING_READ_TIMEOUT_MS: '15000',
};
let restoreEnvironment: () => void = () => undefined;

let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  testApp = await startTestApp();
});

afterAll(async () => {
  await testApp.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
});

beforeEach(async () => {
  ids = await resetToDemo(testApp.orm);
  rmSync(fileStoreDir, { recursive: true, force: true });
  mkdirSync(fileStoreDir, { recursive: true });
  presenter = new ApiClient(testApp.app);
  expect((await presenter.signIn('presenter@emberline.test', demoPassword)).status).toBe(200);
});

async function upload(files: readonly Uint8Array[], caseId = ids.northDraft) {
  return uploadFiles(presenter, caseId, files);
}

async function accepted(
  files: readonly Uint8Array[],
  caseId = ids.northDraft,
): Promise<ImageSeriesView> {
  const response = await upload(files, caseId);
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  return response.body as ImageSeriesView;
}

async function volumeOf(view: ImageSeriesView) {
  const response = await presenter
    .get(view.volumeUrl)
    .buffer(true)
    .parse((res, callback) => {
      const chunks: Buffer[] = [];
      res.on('data', (chunk: Buffer) => chunks.push(chunk));
      res.on('end', () => callback(null, Buffer.concat(chunks)));
    });
  expect(response.status).toBe(200);
  return decodeVolumeFile(new Uint8Array(response.body as Buffer));
}

function expectVecClose(actual: readonly number[], expected: readonly number[], digits = 6) {
  expect(actual).toHaveLength(expected.length);
  actual.forEach((value, index) => expect(value).toBeCloseTo(expected[index], digits));
}

/**
 * P = S + X·Δi·i + Y·Δj·j (DICOM PS3.3 C.7.6.2.1.1), S the Image Position (Patient) of the
 * voxel's own slice, X and Y the row and column directions, Δi = Pixel Spacing[1],
 * Δj = Pixel Spacing[0]: computed here from the files, independently of the server's grid.
 */
function patientPositionFromFiles(spec: SeriesSpec, i: number, j: number, s: number): Vec3 {
  const [x, y] = spec.orientation;
  const origin = slicePosition(spec, s);
  return origin.map(
    (value, axis) =>
      value + x[axis] * spec.pixelSpacing[1] * i + y[axis] * spec.pixelSpacing[0] * j,
  ) as Vec3;
}

function normalize(vector: Vec3): Vec3 {
  const length = Math.hypot(...vector);
  return vector.map((value) => value / length) as Vec3;
}

describe(`patient coordinates (${GEOMETRY})`, () => {
  it('places voxel (100, 50) of an axial slice at (−95, −165, 50), worked by hand', async () => {
    // IPP (−175, −200, 50), IOP (1,0,0, 0,1,0), Pixel Spacing [0.7, 0.8] [C].
    const view = await accepted(buildSeries(seriesSpec()));
    expectVecClose(view.originLps, [-175, -200, 50]);
    expectVecClose(view.spacingMm, [0.8, 0.7, 2.5]);
    expectVecClose(voxelToLps(seriesVolumeGeometry(view), [100, 50, 0]), [-95, -165, 50]);
  });

  it('places the same voxel of a coronal slice at (−170, 30, 85): the second worked example', async () => {
    // IOP (1,0,0, 0,0,−1), IPP (−250, 30, 120), same spacing and voxel [C].
    const spec = seriesSpec({
      firstPosition: [-250, 30, 120],
      orientation: [
        [1, 0, 0],
        [0, 0, -1],
      ],
    });
    const view = await accepted(buildSeries(spec));
    // The slice normal X × Y = (0, 1, 0): the slices stack posteriorly.
    expectVecClose(view.orientation.sliceNormalLps, [0, 1, 0]);
    expectVecClose(voxelToLps(seriesVolumeGeometry(view), [100, 50, 0]), [-170, 30, 85]);
    expectVecClose(voxelToLps(seriesVolumeGeometry(view), [100, 50, 3]), [-170, 37.5, 85]);
  });

  it('keeps an oblique orientation and puts every voxel where its file says', async () => {
    const degrees = Math.PI / 180;
    const row = normalize([Math.cos(30 * degrees), Math.sin(30 * degrees), 0]);
    // Column direction: perpendicular to the row, tilted 20° out of the axial plane.
    const inPlane: Vec3 = [-Math.sin(30 * degrees), Math.cos(30 * degrees), 0];
    const column = normalize(
      inPlane.map(
        (value, axis) => value * Math.cos(20 * degrees) + (axis === 2 ? Math.sin(20 * degrees) : 0),
      ) as Vec3,
    );
    const spec = seriesSpec({ orientation: [row, column], firstPosition: [12.5, -40, 80] });
    const view = await accepted(buildSeries(spec));
    expectVecClose(view.orientation.rowLps, row);
    expectVecClose(view.orientation.columnLps, column);
    expectVecClose(view.orientation.sliceNormalLps, cross(row, column));
    const geometry = seriesVolumeGeometry(view);
    for (const [i, j, s] of [
      [0, 0, 0],
      [31, 0, 0],
      [0, 31, 5],
      [17, 9, 3],
    ]) {
      expectVecClose(voxelToLps(geometry, [i, j, s]), patientPositionFromFiles(spec, i, j, s), 4);
    }
  });

  it('sorts slices sent in reverse and shuffled order along the normal', async () => {
    const spec = seriesSpec();
    const files = buildSeries(spec);
    // The same series in two of the presenter's cases: one upload each.
    for (const [caseId, order] of [
      [ids.northDraft, [5, 4, 3, 2, 1, 0]],
      [ids.northReady, [3, 0, 5, 1, 4, 2]],
    ] as const) {
      const view = await accepted(
        order.map((s) => files[s]),
        caseId,
      );
      // The origin is the slice lowest along the normal, whatever the order of upload.
      expectVecClose(view.originLps, [-175, -200, 50]);
      const { voxels } = await volumeOf(view);
      for (let k = 0; k < 6; k++) {
        // Slice k of the volume holds the pixels of the file at position k (1000 + … + 100·k).
        expect(voxels[7 + 32 * (9 + 32 * k)]).toBe(defaultStoredValue(7, 9, k) - 1024);
      }
    }
  });

  it('reads Implicit VR Little Endian to the same voxels as Explicit VR Little Endian', async () => {
    const spec = seriesSpec();
    const explicit = await volumeOf(await accepted(buildSeries(spec)));
    const implicitSpec = {
      ...spec,
      seriesUid: originalUid(),
      transferSyntaxUid: implicitLittleEndian,
    };
    const implicit = await volumeOf(await accepted(buildSeries(implicitSpec)));
    expect(implicit.voxels).toEqual(explicit.voxels);
    expect(implicit.header.originLps).toEqual(explicit.header.originLps);
  });

  it('reads signed 12-bit pixels (Pixel Representation 1, Bits Stored 12) with their sign', async () => {
    // Stored −500 … −469 as 12-bit two's complement; slope 1, intercept 0: values as stored.
    const spec = seriesSpec({
      pixelRepresentation: 1,
      bitsStored: 12,
      rescale: { slope: 1, intercept: 0 },
      storedValue: (i) => (-500 + i) & 0xfff,
    });
    const { voxels } = await volumeOf(await accepted(buildSeries(spec)));
    expect(voxels[0]).toBe(-500);
    expect(voxels[31]).toBe(-469);
    expect(Math.max(...voxels)).toBe(-469);
  });

  it('reads Pixel Padding Value (and its Range Limit) as outside the field: air, not below it', async () => {
    // DICOM PS3.3 C.7.5.1.1.2: stored values from Pixel Padding Value to Pixel Padding Range
    // Limit mark pixels outside the scanned field. Stored −2000…−1990 in the first three
    // columns (signed 16-bit); intercept −1024 would put them near −3000 HU as values.
    const padded = (i: number, j: number, s: number) =>
      i < 3 ? -2000 + ((j + s) % 11) : 1000 + i + 3 * j + 100 * s;
    const spec = seriesSpec({
      pixelRepresentation: 1,
      storedValue: (i, j, s) => padded(i, j, s) & 0xffff,
      adjust: (_s, dataset) => {
        dataset['00280120'] = { vr: 'SS', Value: [-2000] };
        dataset['00280121'] = { vr: 'SS', Value: [-1990] };
      },
    });
    const view = await accepted(buildSeries(spec));
    const { voxels } = await volumeOf(view);
    // Padding becomes air (−1024 HU); the rest is stored − 1024 as before.
    expect(voxels[0]).toBe(-1024);
    expect(voxels[2 + 32 * 5]).toBe(-1024);
    expect(voxels[3]).toBe(1000 + 3 - 1024);
    expect(view.valueRange.min).toBe(-1024);
    expect(Math.min(...voxels)).toBe(-1024);
  });

  it('takes an MR series, values in scanner units, window from the range', async () => {
    const spec = seriesSpec({ modality: 'MR', storedValue: (i, j) => 100 + i + j });
    const view = await accepted(buildSeries(spec));
    expect(view.modality).toBe('MR');
    expect(view.valueUnit).toBe('scanner-units');
    expect(view.valueRange).toEqual({ min: 100, max: 162 });
    expect(view.window).toEqual({ centre: 131, width: 62 });
  });

  it('takes the window of the first slice when the files carry one', async () => {
    const spec = seriesSpec({
      adjust: (_s, dataset) => {
        dataset['00281050'] = { vr: 'DS', Value: ['60', '400'] };
        dataset['00281051'] = { vr: 'DS', Value: ['150', '1500'] };
      },
    });
    expect((await accepted(buildSeries(spec))).window).toEqual({ centre: 60, width: 150 });
  });
});

function problem(response: { body: unknown }): ProblemDetails {
  return response.body as ProblemDetails;
}

describe(`refused series, each with a 4xx naming what is wrong (${GEOMETRY})`, () => {
  const refusals: {
    name: string;
    files: () => Uint8Array[];
    status: number;
    detail: RegExp;
  }[] = [
    {
      name: 'mixed orientations',
      files: () =>
        buildSeries(
          seriesSpec({
            adjust: (s, dataset) => {
              if (s === 4)
                dataset['00200037'] = { vr: 'DS', Value: ['1', '0', '0', '0', '0.8', '0.6'] };
            },
          }),
        ),
      status: 400,
      detail: /File 5 \(slice-4\.dcm\) is oriented differently from file 1.*mixes orientations/,
    },
    {
      name: 'a missing slice',
      files: () => buildSeries(seriesSpec()).filter((_, s) => s !== 3),
      status: 400,
      detail: /5\.00 mm apart.*1 slice is missing between them/,
    },
    {
      name: 'uneven spacing',
      files: () =>
        buildSeries(
          seriesSpec({
            adjust: (s, dataset) => {
              if (s === 2) dataset['00200032'] = { vr: 'DS', Value: ['-175', '-200', '55.6'] };
            },
          }),
        ),
      status: 400,
      detail: /the spacing is uneven/,
    },
    {
      name: 'mixed image sizes',
      files: () => {
        const spec = seriesSpec();
        const files = buildSeries(spec);
        files[2] = part10(sliceDataset({ ...spec, rows: 30 }, 2, originalUid()));
        return files;
      },
      status: 400,
      detail: /File 3 \(slice-2\.dcm\) has 30 × 32 pixels.*mixes image sizes/,
    },
    {
      name: 'one slice only',
      files: () => buildSeries(seriesSpec()).slice(0, 1),
      status: 400,
      detail: /at least 2 slices; the series has 1/,
    },
    {
      name: 'the same slice twice',
      files: () => {
        const files = buildSeries(seriesSpec());
        return [...files, files[2]];
      },
      status: 400,
      detail: /File 3 \(slice-2\.dcm\) and File 7 \(slice-\d\.dcm\) are the same image/,
    },
    {
      name: 'a modality other than CT or MR',
      files: () => buildSeries(seriesSpec({ modality: 'US' })),
      status: 415,
      detail: /is of modality US; Emberline takes CT and MR series only/,
    },
    {
      name: 'a JPEG Baseline transfer syntax',
      files: () => buildSeries(seriesSpec({ transferSyntaxUid: '1.2.840.10008.1.2.4.50' })),
      status: 415,
      detail:
        /File 1 \(slice-0\.dcm\) is compressed as JPEG Baseline \(Process 1\), which Emberline does not decode/,
    },
    {
      name: 'a transfer syntax no standard defines',
      files: () => buildSeries(seriesSpec({ transferSyntaxUid: '1.2.840.10008.1.2.4.999' })),
      status: 415,
      detail:
        /uses the transfer syntax 1\.2\.840\.10008\.1\.2\.4\.999, which Emberline does not read/,
    },
    {
      name: 'a file that is not DICOM',
      files: () => [
        ...buildSeries(seriesSpec()).slice(0, 2),
        new TextEncoder().encode('Patient list, not an image\n'.repeat(20)),
      ],
      status: 415,
      detail:
        /File 3 \(slice-2\.dcm\) is not a DICOM file: it lacks the "DICM" marker after the 128-byte preamble/,
    },
    {
      name: 'a file truncated inside its pixels',
      files: () => {
        const files = buildSeries(seriesSpec());
        files[1] = files[1].subarray(0, files[1].length - 700);
        return files;
      },
      status: 400,
      detail: /File 2 \(slice-1\.dcm\) is truncated/,
    },
    {
      name: 'a file truncated inside its header',
      files: () => {
        const files = buildSeries(seriesSpec());
        files[0] = files[0].subarray(0, 300);
        return files;
      },
      status: 400,
      detail: /File 1 \(slice-0\.dcm\) is truncated/,
    },
    {
      name: 'a multi-frame image',
      files: () =>
        buildSeries(
          seriesSpec({
            adjust: (_s, dataset) => (dataset['00280008'] = { vr: 'IS', Value: ['4'] }),
          }),
        ),
      status: 415,
      detail: /holds 4 frames/,
    },
    {
      name: 'an image larger than the largest matrix read (before any decoding)',
      files: () =>
        buildSeries(
          seriesSpec({
            adjust: (_s, dataset) => (dataset['00280010'] = { vr: 'US', Value: [8192] }),
          }),
        ),
      status: 413,
      detail:
        /File 1 \(slice-0\.dcm\) is 32 × 8192 pixels; Emberline reads images of at most 4096 × 4096/,
    },
    {
      name: 'a colour image',
      files: () =>
        buildSeries(
          seriesSpec({
            adjust: (_s, dataset) => (dataset['00280004'] = { vr: 'CS', Value: ['RGB'] }),
          }),
        ),
      status: 415,
      detail: /colour image.*RGB/,
    },
    {
      name: 'burned-in annotation, which the profile does not clean',
      files: () =>
        buildSeries(
          seriesSpec({
            adjust: (s, dataset) => {
              if (s === 0) dataset['00280301'] = { vr: 'CS', Value: ['YES'] };
            },
          }),
        ),
      status: 415,
      detail: /File 1 \(slice-0\.dcm\) declares Burned In Annotation \(0028,0301\) YES/,
    },
    {
      name: 'pixels outside int16 once rescaled',
      files: () => buildSeries(seriesSpec({ rescale: { slope: 40, intercept: 0 } })),
      status: 400,
      detail: /outside −32768…32767/,
    },
  ];

  it.each(refusals)('refuses $name with $status', async ({ files, status, detail }) => {
    const response = await upload(files());
    expect(response.status, JSON.stringify(response.body)).toBe(status);
    expect(problem(response).detail).toMatch(detail);
    expect(problem(response).type).toMatch(/^urn:emberline:problem:imaging:/);
    expect(
      readdirSync(fileStoreDir, { recursive: true }).filter((name) =>
        String(name).endsWith('.vol'),
      ),
    ).toEqual([]);
  });
});
