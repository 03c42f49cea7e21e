/**
 * Structures of a series from a NIfTI-1 label map: the invented abdominal CT of sample-data/
 * uploaded through the API, its labels.nii.gz imported, and the answers checked against the
 * generator's manifest (voxel counts of the painted label map), the analytic sphere volume,
 * and the orientation rules of nifti1.h (RAS world) and DICOM PS3.3 C.7.6.2.1.1 (LPS).
 */
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gunzipSync, gzipSync } from 'fflate';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  decodeLabelMapFile,
  type ImageSeriesView,
  type ProblemDetails,
  type StructureImportResult,
  type StructureView,
} from '@emberline/shared';
import { generateAbdomenCt } from '../../sample-data/generate-abdomen-ct';
import { seedDemoImaging } from '../../server/seeders/demo-imaging';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { LabelMap } from '../../server/src/modules/structures/label-map.entity';
import { Structure } from '../../server/src/modules/structures/structure.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { setEnvironment, uploadFiles } from './imaging-fixtures';

const NIFTI_1 = 'NIfTI-1 header documentation, nifti1.h';
const PS3_3 = 'DICOM PS3.3 C.7.6.2.1.1';
const SPHERE = 'sphere volume 4/3·π·r³ [C]';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-structures-test-'));
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'structures-test-secret-7d21c0b9e84a4f6c9a3e',
  IMAGING_READ_TIMEOUT_MS: '20000',
};

const generated = generateAbdomenCt();
const { manifest } = generated;
const labelsJson = JSON.stringify(generated.labels);
/** The uncompressed .nii bytes of the generated label map. */
const niftiBytes = gunzipSync(generated.labelMapNiftiGz);

let restoreEnvironment: () => void = () => undefined;
let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;
let series: ImageSeriesView;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  const response = await client.signIn(email, demoPassword);
  expect(response.status).toBe(200);
  return client;
}

async function csrfToken(client: ApiClient): Promise<string> {
  const access = { domain: '127.0.0.1', path: '/', secure: false, script: true };
  if (!client.agent.jar.getCookie('XSRF-TOKEN', access)) await client.get('/api/health');
  const cookie = client.agent.jar.getCookie('XSRF-TOKEN', access);
  if (!cookie) throw new Error('the server set no XSRF-TOKEN cookie');
  return cookie.value;
}

/** POST /api/series/:id/structures, multipart, as the client sends it. */
async function importLabelMap(
  client: ApiClient,
  file: Uint8Array,
  options: { fileName?: string; labels?: string; seriesId?: string } = {},
) {
  let call = client.agent
    .post(`/api/series/${options.seriesId ?? series.id}/structures`)
    .set('Host', '127.0.0.1')
    .set('X-XSRF-TOKEN', await csrfToken(client))
    .attach('file', Buffer.from(file), {
      filename: options.fileName ?? 'labels.nii.gz',
      contentType: 'application/octet-stream',
    });
  if (options.labels !== undefined) call = call.field('labels', options.labels);
  return call;
}

const problemOf = (response: { body: unknown }) => response.body as ProblemDetails;
/** The structures of a list (GET) or of an import's answer (POST: `{ structures, overlaps }`). */
const structuresOf = (response: { body: unknown }): StructureView[] => {
  const body = response.body as StructureView[] | StructureImportResult;
  return Array.isArray(body) ? body : body.structures;
};

/** A copy of the uncompressed label map with header fields changed (offsets of nifti1.h). */
function editedNifti(edit: (header: DataView) => void): Uint8Array {
  const bytes = niftiBytes.slice();
  edit(new DataView(bytes.buffer));
  return bytes;
}

/** Writes srow_x, srow_y, srow_z (bytes 280–327 of the header, float32 little-endian). */
function setSform(header: DataView, rows: number[][]): void {
  rows.forEach((row, rowIndex) =>
    row.forEach((value, column) =>
      header.setFloat32(280 + 16 * rowIndex + 4 * column, value, true),
    ),
  );
}

/** A small valid NIfTI-1 label map of `dimensions`, on the generated grid's spacing and origin. */
function smallNifti(dimensions: [number, number, number]): Uint8Array {
  const voxelCount = dimensions[0] * dimensions[1] * dimensions[2];
  const bytes = new Uint8Array(352 + voxelCount);
  bytes.set(niftiBytes.subarray(0, 352));
  const header = new DataView(bytes.buffer);
  dimensions.forEach((size, index) => header.setInt16(42 + 2 * index, size, true));
  bytes.fill(1, 352);
  return bytes;
}

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  testApp = await startTestApp();
  ids = await resetToDemo(testApp.orm);
  presenter = await signedIn('presenter@emberline.test');
  const upload = await uploadFiles(
    presenter,
    ids.northReady,
    generated.slices.map((slice) => new Uint8Array(slice)),
  );
  expect(upload.status, JSON.stringify(upload.body)).toBe(201);
  series = upload.body as ImageSeriesView;
}, 30_000);

afterAll(async () => {
  await testApp.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
});

describe('importing the label map of the invented CT', () => {
  it('answers 201 with every structure, its voxel count and volume those of the manifest', async () => {
    const response = await importLabelMap(presenter, generated.labelMapNiftiGz, {
      labels: labelsJson,
    });
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    const structures = structuresOf(response);
    expect(structures.map((entry) => entry.labelValue)).toEqual(
      manifest.structures.map((entry) => entry.labelValue).sort((a, b) => a - b),
    );
    for (const expected of manifest.structures) {
      const found = structures.find((entry) => entry.labelValue === expected.labelValue);
      expect(found, `label ${expected.labelValue}`).toMatchObject({
        seriesId: series.id,
        kind: expected.kind,
        voxelCount: expected.voxelCount,
        // Both: voxel count × Δi·Δj·Δk / 1000, to six decimals.
        volumeMl: expected.voxelVolumeMl,
        source: 'nifti',
      });
    }
    const listed = await presenter.get(`/api/series/${series.id}/structures`);
    expect(listed.status).toBe(200);
    expect(listed.body).toEqual(structures);
  });

  it(`keeps each tumour's volume within the voxelisation bound of ${SPHERE}`, async () => {
    const response = await importLabelMap(presenter, generated.labelMapNiftiGz, {
      labels: labelsJson,
    });
    expect(response.status).toBe(201);
    const structures = structuresOf(response);
    expect(manifest.tumours.length).toBeGreaterThan(0);
    // A voxel counts when its centre is inside; only voxels within half a voxel diagonal h of
    // the surface can be wrong, so |V_voxels − 4/3·π·r³| ≤ 4/3·π·((r + h)³ − (r − h)³).
    const [dx, dy, dz] = series.spacingMm;
    const halfDiagonalMm = Math.hypot(dx, dy, dz) / 2;
    for (const tumour of manifest.tumours) {
      const found = structures.find((entry) => entry.labelValue === tumour.labelValue);
      expect(found?.kind).toBe('tumour');
      const analyticMl = ((4 / 3) * Math.PI * tumour.radiusMm ** 3) / 1000;
      expect(tumour.analyticVolumeMl).toBeCloseTo(analyticMl, 5);
      const boundMl =
        ((4 / 3) *
          Math.PI *
          ((tumour.radiusMm + halfDiagonalMm) ** 3 - (tumour.radiusMm - halfDiagonalMm) ** 3)) /
        1000;
      expect(Math.abs((found?.volumeMl ?? Number.NaN) - analyticMl)).toBeLessThanOrEqual(boundMl);
    }
  });

  it('stores the label map once, on the series grid, with the counts of the manifest', async () => {
    expect((await importLabelMap(presenter, generated.labelMapNiftiGz)).status).toBe(201);
    const response = await presenter
      .get(`/api/series/${series.id}/label-map`)
      .buffer(true)
      .parse((res, callback) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => callback(null, Buffer.concat(chunks)));
      });
    expect(response.status).toBe(200);
    const { header, labels } = decodeLabelMapFile(new Uint8Array(response.body as Buffer));
    expect(header.dimensions).toEqual(manifest.grid.dimensions);
    expect(header.dataType).toBe('uint8');
    const counts = new Map<number, number>();
    for (const value of labels) counts.set(value, (counts.get(value) ?? 0) + 1);
    for (const expected of manifest.structures) {
      expect(counts.get(expected.labelValue), `label ${expected.labelValue}`).toBe(
        expected.voxelCount,
      );
    }
  });

  it('accepts the same label map uncompressed (.nii)', async () => {
    const response = await importLabelMap(presenter, niftiBytes, {
      fileName: 'labels.nii',
      labels: labelsJson,
    });
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    const tumour = manifest.tumours[0];
    expect(structuresOf(response).find((s) => s.labelValue === tumour.labelValue)).toMatchObject({
      voxelCount: tumour.voxelCount,
      volumeMl: tumour.voxelVolumeMl,
    });
  });

  it('audits the import, the list and the label map read', async () => {
    expect((await importLabelMap(presenter, generated.labelMapNiftiGz)).status).toBe(201);
    expect((await presenter.get(`/api/series/${series.id}/structures`)).status).toBe(200);
    expect((await presenter.get(`/api/series/${series.id}/label-map`)).status).toBe(200);
    const events = await testApp.orm.em
      .fork()
      .find(AuditEvent, { entityId: series.id }, { orderBy: { at: 'desc' } });
    const actions = events.map((event) => event.action);
    for (const action of ['structures.import', 'structures.list', 'structures.label-map-read']) {
      expect(actions).toContain(action);
    }
  });
});

describe(`refusals (${NIFTI_1}; ${PS3_3})`, () => {
  it('refuses a label map of other dimensions, naming both grids', async () => {
    const response = await importLabelMap(presenter, smallNifti([10, 10, 10]), {
      fileName: 'small.nii',
    });
    expect(response.status).toBe(400);
    expect(problemOf(response).detail).toContain('10 × 10 × 10');
    expect(problemOf(response).detail).toContain('192 × 160 × 64');
  });

  it('refuses a label map shifted 5 mm along x, and keeps the earlier import', async () => {
    const before = await importLabelMap(presenter, generated.labelMapNiftiGz, {
      labels: labelsJson,
    });
    expect(before.status).toBe(201);
    const shifted = editedNifti((header) => {
      // srow_x[3] (byte 292): RAS x offset of voxel (0, 0, 0).
      header.setFloat32(292, header.getFloat32(292, true) + 5, true);
    });
    const response = await importLabelMap(presenter, shifted, { fileName: 'shifted.nii' });
    expect(response.status).toBe(400);
    expect(problemOf(response).type).toBe('urn:emberline:problem:structures:grid-mismatch');
    expect(problemOf(response).detail).toContain('5.00 mm away');
    const after = await presenter.get(`/api/series/${series.id}/structures`);
    expect(after.body).toEqual(structuresOf(before));
  });

  it('refuses a label map whose sform is written in LPS instead of RAS (x and y not negated)', async () => {
    // nifti1.h: srow_x/y/z map (i, j, k) to RAS. Written as the LPS matrix of PS3.3 instead,
    // voxel (0, 0, 0) lands at LPS (+76.4, +63.6, −90) rather than (−76.4, −63.6, −90).
    const { voxelToLps } = manifest.grid;
    const written = editedNifti((header) => {
      setSform(header, voxelToLps.slice(0, 3));
      header.setInt16(252, 0, true); // qform_code 0: the sform is the only placement
    });
    const response = await importLabelMap(presenter, written, { fileName: 'lps.nii' });
    expect(response.status).toBe(400);
    expect(problemOf(response).type).toBe('urn:emberline:problem:structures:grid-mismatch');
    // The correct (RAS) sform is accepted: the refusal is the sign, nothing else.
    const correct = editedNifti((header) => {
      setSform(header, manifest.grid.voxelToRas.slice(0, 3));
      header.setInt16(252, 0, true);
    });
    expect((await importLabelMap(presenter, correct, { fileName: 'ras.nii' })).status).toBe(201);
  });

  it('refuses labels that are not JSON, naming the field labels', async () => {
    const response = await importLabelMap(presenter, generated.labelMapNiftiGz, {
      labels: '{"1": liver}',
    });
    expect(response.status).toBe(400);
    expect(problemOf(response).detail).toContain('"labels"');
    expect(problemOf(response).detail).toContain('not JSON');
  });

  it('refuses a label mapped to an unknown kind, naming it', async () => {
    const response = await importLabelMap(presenter, generated.labelMapNiftiGz, {
      labels: JSON.stringify({ ...generated.labels, '1': 'spleen' }),
    });
    expect(response.status).toBe(400);
    expect(problemOf(response).detail).toContain('"labels"');
    expect(problemOf(response).detail).toContain('"spleen"');
  });

  it('refuses a DICOM file that is not a segmentation (a CT slice) with 415', async () => {
    const response = await importLabelMap(presenter, new Uint8Array(generated.slices[0]), {
      fileName: 'seg.dcm',
    });
    expect(response.status).toBe(415);
    expect(problemOf(response).detail).toContain('not a segmentation');
  });

  it('refuses a gzip file that inflates past what the series grid can need (413)', async () => {
    const [nx, ny, nz] = series.dimensions;
    const bomb = gzipSync(new Uint8Array(1_048_576 + nx * ny * nz * 8 + 1));
    const response = await importLabelMap(presenter, bomb, { fileName: 'huge.nii.gz' });
    expect(response.status).toBe(413);
  });
});

describe('naming structures (PATCH /api/structures/:id)', () => {
  it('remaps a label to another kind and renames it', async () => {
    const imported = structuresOf(await importLabelMap(presenter, generated.labelMapNiftiGz));
    const target = imported.find((entry) => entry.labelValue === 12);
    if (!target) throw new Error('label 12 missing');
    const response = await presenter.patch(`/api/structures/${target.id}`, {
      kind: 'stomach',
      name: 'Loop near the stomach',
    });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body).toMatchObject({ kind: 'stomach', name: 'Loop near the stomach' });
    const listed = structuresOf(await presenter.get(`/api/series/${series.id}/structures`));
    expect(listed.find((entry) => entry.id === target.id)?.kind).toBe('stomach');
    const cleared = await presenter.patch(`/api/structures/${target.id}`, { kind: null });
    expect(cleared.body).toMatchObject({ kind: null, name: 'Loop near the stomach' });
  });

  it('refuses an unknown kind with 400 naming kind', async () => {
    const [first] = structuresOf(await presenter.get(`/api/series/${series.id}/structures`));
    const response = await presenter.patch(`/api/structures/${first.id}`, { kind: 'spleen' });
    expect(response.status).toBe(400);
    expect(problemOf(response).detail).toContain('kind');
  });
});

describe('who may import, list and name', () => {
  it('lets a board member list and read but not import (403) or rename (403)', async () => {
    const member = await signedIn('member@emberline.test');
    expect((await member.get(`/api/series/${series.id}/structures`)).status).toBe(200);
    expect((await member.get(`/api/series/${series.id}/label-map`)).status).toBe(200);
    expect((await importLabelMap(member, generated.labelMapNiftiGz)).status).toBe(403);
    const [first] = structuresOf(await member.get(`/api/series/${series.id}/structures`));
    expect((await member.patch(`/api/structures/${first.id}`, { kind: null })).status).toBe(403);
  });

  it('answers 404 outside the board and 401 without a session', async () => {
    const south = await signedIn('south@emberline.test');
    expect((await south.get(`/api/series/${series.id}/structures`)).status).toBe(404);
    expect((await south.get(`/api/series/${series.id}/label-map`)).status).toBe(404);
    expect((await importLabelMap(south, generated.labelMapNiftiGz)).status).toBe(404);
    const anonymous = new ApiClient(testApp.app);
    expect((await anonymous.get(`/api/series/${series.id}/structures`)).status).toBe(401);
    expect((await importLabelMap(anonymous, generated.labelMapNiftiGz)).status).toBe(401);
  });
});

describe('deleting a draft case', () => {
  it('removes its stored volume and label map files with it', async () => {
    const upload = await uploadFiles(
      presenter,
      ids.northDraft,
      generated.slices.map((slice) => new Uint8Array(slice)),
    );
    expect(upload.status, JSON.stringify(upload.body)).toBe(201);
    const draftSeries = upload.body as ImageSeriesView;
    const imported = await importLabelMap(presenter, generated.labelMapNiftiGz, {
      seriesId: draftSeries.id,
      labels: labelsJson,
    });
    expect(imported.status).toBe(201);
    const em = testApp.orm.em.fork();
    const stored = await em.findOneOrFail(ImageSeries, draftSeries.id);
    const labelMap = await em.findOneOrFail(LabelMap, { series: draftSeries.id });
    const files = [
      join(fileStoreDir, ...stored.storageKey.split('/')),
      join(fileStoreDir, 'label-maps', ...labelMap.storageKey.split('/')),
    ];
    expect(files.map((file) => existsSync(file))).toEqual([true, true]);

    expect((await presenter.delete(`/api/cases/${ids.northDraft}`)).status).toBe(204);
    expect(files.map((file) => existsSync(file))).toEqual([false, false]);
    // The other case's files stay.
    const kept = await em.fork().findOneOrFail(ImageSeries, series.id);
    expect(existsSync(join(fileStoreDir, ...kept.storageKey.split('/')))).toBe(true);
  }, 30_000);
});

describe('seeding the demo CT', () => {
  it('gives NLB-2026-014 the invented CT and its structures once, through the upload code', async () => {
    ids = await resetToDemo(testApp.orm);
    expect(await seedDemoImaging(testApp.orm.em.fork())).toBe(true);
    const em = testApp.orm.em.fork();
    const seeded = await em.find(ImageSeries, { clinicalCase: ids.northReady });
    expect(seeded.map((entry) => entry.dimensions)).toEqual([manifest.grid.dimensions]);
    const structures = await em.find(Structure, { series: seeded[0].id });
    expect(
      structures.map((entry) => [entry.labelValue, entry.kind, entry.voxelCount]).sort(),
    ).toEqual(
      manifest.structures.map((entry) => [entry.labelValue, entry.kind, entry.voxelCount]).sort(),
    );
    expect(await seedDemoImaging(testApp.orm.em.fork())).toBe(false);
  }, 20_000);
});
