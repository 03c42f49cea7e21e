/**
 * Structures of a series from a DICOM Segmentation (SEG): files written with dcmjs
 * (`test/support/dicom-seg-writer.ts`, its own 1-bit packer) and imported through the API.
 * Oracles: the NIfTI-1 label map of the invented CT (the same voxels imported the other way), the
 * masks each test wrote, the geometry of DICOM PS3.3 C.7.6.2.1.1 (LPS) and the frame layout of
 * PS3.3 C.8.20.2 / PS3.5 8.1.1 (1-bit pixels, frames back to back).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gunzipSync } from 'fflate';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import {
  decodeLabelMapFile,
  type ImageSeriesView,
  type ProblemDetails,
  type StructureImportResult,
  type StructureView,
  type Vec3,
} from '@emberline/shared';
import { generateAbdomenCt } from '../../sample-data/generate-abdomen-ct';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { Structure } from '../../server/src/modules/structures/structure.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import {
  implicitVrLittleEndian,
  masksFromLabels,
  writeDicomSeg,
  type SegCode,
  type SegGrid,
  type SegSpec,
} from '../support/dicom-seg-writer';
import {
  buildSeries,
  seededRandom,
  seriesSpec,
  setEnvironment,
  uploadFiles,
} from './imaging-fixtures';

const PS3_3 = 'DICOM PS3.3 C.7.6.2.1.1 and C.8.20.2';
const PS3_5 = 'DICOM PS3.5 8.1.1';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-structures-seg-test-'));
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'structures-seg-test-secret-51c0e7a2b9d84f3e',
  IMAGING_READ_TIMEOUT_MS: '20000',
  STRUCTURES_READ_TIMEOUT_MS: '20000',
};

/**
 * SNOMED CT body structures as HL7 mCODE's RadiotherapyTreatmentLocationVS lists them (AAPM
 * TG-263); Neoplasm 108369006 from memory. Hepatic vein and artery carry no code here (their
 * labels name them), as the server's table has none checked for them.
 */
const sct = (codeValue: string, codeMeaning: string): SegCode => ({
  codeValue,
  codingSchemeDesignator: 'SCT',
  codeMeaning,
});
const typeOfKind: Record<string, SegCode | undefined> = {
  liver: sct('10200004', 'Liver'),
  tumour: sct('108369006', 'Neoplasm'),
  'portal-vein': sct('32764006', 'Portal vein'),
  'bile-duct': sct('79741001', 'Common bile duct'),
  gallbladder: sct('28231008', 'Gallbladder'),
  bowel: sct('113276009', 'Intestine'),
  stomach: sct('69695003', 'Stomach'),
  lung: sct('39607008', 'Lung'),
  heart: sct('80891009', 'Heart'),
  kidney: sct('64033007', 'Kidney'),
  bone: sct('113197003', 'Rib'),
  skin: sct('39937001', 'Skin'),
};

const generated = generateAbdomenCt();
const { manifest } = generated;
/** The NIfTI label map's voxels (uint8, after its 352-byte header): the oracle. */
const niftiLabels = gunzipSync(generated.labelMapNiftiGz).subarray(352);
const sampleGrid: SegGrid = {
  dimensions: manifest.grid.dimensions,
  spacingMm: manifest.grid.spacingMm,
  originLps: manifest.grid.originLps,
  direction: [
    manifest.grid.rowDirectionLps,
    manifest.grid.columnDirectionLps,
    manifest.grid.sliceDirectionLps,
  ],
};
const sampleNumbers = manifest.structures.map((structure) => structure.labelValue);
/** Human segment labels, e.g. "tumour segment 8". */
const sampleLabel = (name: string) => name.replace(/-/g, ' ');

function sampleSeg(overrides: Partial<SegSpec> = {}): Uint8Array {
  return writeDicomSeg({
    grid: sampleGrid,
    segments: manifest.structures.map((structure) => ({
      segmentNumber: structure.labelValue,
      label: sampleLabel(structure.name),
      type: typeOfKind[structure.kind],
    })),
    masks: masksFromLabels(niftiLabels, sampleNumbers),
    ...overrides,
  });
}

/** The small CT of the tests: 5 × 3 pixels a slice (15, not a multiple of 8), 4 slices. */
const smallSpec = seriesSpec({ columns: 5, rows: 3, slices: 4 });
const smallGrid: SegGrid = {
  dimensions: [smallSpec.columns, smallSpec.rows, smallSpec.slices],
  // Δi = Pixel Spacing[1], Δj = Pixel Spacing[0] (PS3.3 C.7.6.2.1.1).
  spacingMm: [smallSpec.pixelSpacing[1], smallSpec.pixelSpacing[0], smallSpec.sliceSpacingMm],
  originLps: smallSpec.firstPosition,
  direction: [smallSpec.orientation[0], smallSpec.orientation[1], [0, 0, 1]],
};
const smallVoxelCount = 5 * 3 * 4;

/** A label map of the small grid: each voxel 0, 1 or 2 at random (seeded). */
function randomSmallLabels(seed: number): Uint8Array {
  const random = seededRandom(seed);
  return Uint8Array.from({ length: smallVoxelCount }, () => Math.floor(random() * 3));
}

function smallSeg(labels: Uint8Array, overrides: Partial<SegSpec> = {}): Uint8Array {
  return writeDicomSeg({
    grid: smallGrid,
    segments: [
      { segmentNumber: 1, label: 'Liver', type: typeOfKind.liver },
      { segmentNumber: 2, label: 'Tumour', type: typeOfKind.tumour },
    ],
    masks: masksFromLabels(labels, [1, 2]),
    ...overrides,
  });
}

let restoreEnvironment: () => void = () => undefined;
let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;
let sampleSeries: ImageSeriesView;
let smallSeries: ImageSeriesView;

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
async function importFile(
  seriesId: string,
  file: Uint8Array,
  options: { fileName?: string; labels?: string } = {},
) {
  let call = presenter.agent
    .post(`/api/series/${seriesId}/structures`)
    .set('Host', '127.0.0.1')
    .set('X-XSRF-TOKEN', await csrfToken(presenter))
    .attach('file', Buffer.from(file), {
      filename: options.fileName ?? 'segmentation.dcm',
      contentType: 'application/dicom',
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

/** The stored label map's voxels (GET /api/series/:id/label-map). */
async function storedLabels(seriesId: string): Promise<number[]> {
  const response = await presenter
    .get(`/api/series/${seriesId}/label-map`)
    .buffer(true)
    .parse((res, callback) => {
      const chunks: Buffer[] = [];
      res.on('data', (chunk: Buffer) => chunks.push(chunk));
      res.on('end', () => callback(null, Buffer.concat(chunks)));
    });
  expect(response.status).toBe(200);
  return Array.from(decodeLabelMapFile(new Uint8Array(response.body as Buffer)).labels);
}

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  testApp = await startTestApp();
  ids = await resetToDemo(testApp.orm);
  presenter = await signedIn('presenter@emberline.test');
  const sample = await uploadFiles(
    presenter,
    ids.northReady,
    generated.slices.map((slice) => new Uint8Array(slice)),
  );
  expect(sample.status, JSON.stringify(sample.body)).toBe(201);
  sampleSeries = sample.body as ImageSeriesView;
  const small = await uploadFiles(presenter, ids.northDraft, buildSeries(smallSpec));
  expect(small.status, JSON.stringify(small.body)).toBe(201);
  smallSeries = small.body as ImageSeriesView;
}, 60_000);

afterAll(async () => {
  await testApp.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
});

describe('a SEG of the invented CT (oracle: the same labels imported as NIfTI-1)', () => {
  it('imports with the voxel counts and volumes of the NIfTI import, and the same voxels', async () => {
    const nifti = await importFile(sampleSeries.id, generated.labelMapNiftiGz, {
      fileName: 'labels.nii.gz',
    });
    expect(nifti.status, JSON.stringify(nifti.body)).toBe(201);
    const niftiVoxels = await storedLabels(sampleSeries.id);

    const response = await importFile(sampleSeries.id, sampleSeg());
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    const fromSeg = structuresOf(response);
    expect(fromSeg.map((entry) => entry.labelValue)).toEqual(sampleNumbers);
    for (const expected of structuresOf(nifti)) {
      const found = fromSeg.find((entry) => entry.labelValue === expected.labelValue);
      expect(found, `label ${expected.labelValue}`).toMatchObject({
        voxelCount: expected.voxelCount,
        volumeMl: expected.volumeMl,
        source: 'dicom-seg',
      });
    }
    for (const expected of manifest.structures) {
      const found = fromSeg.find((entry) => entry.labelValue === expected.labelValue);
      expect(found?.voxelCount, expected.name).toBe(expected.voxelCount);
    }
    expect(await storedLabels(sampleSeries.id)).toEqual(niftiVoxels);
    const [event] = await testApp.orm.em.fork().find(
      AuditEvent,
      { entityId: sampleSeries.id, action: 'structures.import' },
      {
        orderBy: { at: 'desc' },
        limit: 1,
      },
    );
    expect(event.detail).toMatchObject({ source: 'dicom-seg', structureCount: 17 });
  }, 60_000);

  it("names each structure after its segment label and suggests the sample legend's kinds", async () => {
    const response = await importFile(sampleSeries.id, sampleSeg());
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    for (const structure of structuresOf(response)) {
      const expected = manifest.structures.find((s) => s.labelValue === structure.labelValue);
      expect(structure.name).toBe(sampleLabel(expected?.name ?? ''));
      // labels.json of the sample: label value → kind.
      expect(structure.kind, structure.name).toBe(generated.labels[String(structure.labelValue)]);
    }
  }, 60_000);
});

describe(`frames of a SEG (${PS3_3}; ${PS3_5})`, () => {
  it('reads 1-bit frames packed across byte boundaries (15 pixels a frame)', async () => {
    expect((smallSpec.columns * smallSpec.rows) % 8).not.toBe(0);
    const labels = randomSmallLabels(7);
    const response = await importFile(smallSeries.id, smallSeg(labels, { hasEmptyFrames: true }));
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect(await storedLabels(smallSeries.id)).toEqual(Array.from(labels));
    const counted = (value: number) => labels.filter((label) => label === value).length;
    expect(structuresOf(response).map((entry) => [entry.labelValue, entry.voxelCount])).toEqual([
      [1, counted(1)],
      [2, counted(2)],
    ]);
  });

  it('places frames written in reverse order on the slices their positions name', async () => {
    const labels = randomSmallLabels(11);
    const response = await importFile(smallSeries.id, smallSeg(labels, { frameOrder: 'reverse' }));
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect(await storedLabels(smallSeries.id)).toEqual(Array.from(labels));
  });

  it('reads a SEG written as Implicit VR Little Endian', async () => {
    const labels = randomSmallLabels(13);
    const seg = smallSeg(labels, { transferSyntaxUid: implicitVrLittleEndian });
    const response = await importFile(smallSeries.id, seg);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect(await storedLabels(smallSeries.id)).toEqual(Array.from(labels));
  });

  it('counts a FRACTIONAL pixel in from half the Maximum Fractional Value (Emberline rule)', async () => {
    const fractions = [0, 1, 99, 100, 101, 199, 200];
    const mask = Uint8Array.from({ length: smallVoxelCount }, (_, index) => fractions[index % 7]);
    const seg = writeDicomSeg({
      grid: smallGrid,
      segments: [{ segmentNumber: 1, label: 'Liver' }],
      masks: new Map([[1, mask]]),
      fractional: { maxValue: 200 },
    });
    const response = await importFile(smallSeries.id, seg);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect(await storedLabels(smallSeries.id)).toEqual(
      Array.from(mask, (value) => (value >= 100 ? 1 : 0)),
    );
  });
});

describe('segment descriptions', () => {
  const oneVoxelEach = Uint8Array.from({ length: smallVoxelCount }, (_, index) =>
    index < 6 ? index + 1 : 0,
  );
  const described = (labels?: string) =>
    importFile(
      smallSeries.id,
      writeDicomSeg({
        grid: smallGrid,
        segments: [
          { segmentNumber: 1, label: 'Segment A', type: typeOfKind.liver },
          { segmentNumber: 2, label: 'Right portal vein branch' },
          { segmentNumber: 3, label: 'HCC lesion' },
          { segmentNumber: 4, label: 'Spleen', type: sct('78961009', 'Spleen') },
          { segmentNumber: 5, label: `  Gall\u0007bladder   wall  ` },
          { segmentNumber: 6, label: `${'Hepatic vein, '.repeat(7)}end` },
        ],
        masks: masksFromLabels(oneVoxelEach, [1, 2, 3, 4, 5, 6]),
      }),
      labels === undefined ? {} : { labels },
    );

  it('suggests kinds from the property type code, else the label; names are the labels', async () => {
    const response = await described();
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect(structuresOf(response).map((entry) => [entry.kind, entry.name])).toEqual([
      ['liver', 'Segment A'],
      ['portal-vein', 'Right portal vein branch'],
      ['tumour', 'HCC lesion'],
      [null, 'Spleen'],
      // Control characters and runs of spaces become one space; trimmed.
      ['gallbladder', 'Gall bladder wall'],
      ['hepatic-vein', `${'Hepatic vein, '.repeat(7)}end`.slice(0, 80).trim()],
    ]);
  });

  it('lets the labels field override a suggested kind', async () => {
    const response = await described(JSON.stringify({ '1': 'tumour', '4': 'bowel' }));
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    const byValue = new Map(structuresOf(response).map((entry) => [entry.labelValue, entry]));
    expect(byValue.get(1)).toMatchObject({ kind: 'tumour', name: 'Segment A' });
    expect(byValue.get(4)).toMatchObject({ kind: 'bowel', name: 'Spleen' });
    expect(byValue.get(2)?.kind).toBe('portal-vein');
  });
});

/**
 * Overlapping segments (DICOM PS3.3 C.8.20 lets a SEG's segments overlap): each voxel goes to
 * one segment by Emberline's kind order — tumour, then vessels and ducts, then other organs,
 * then the liver, the skin last; the smaller of two of the same rank (common practice of
 * label-map tools: the structure inside the one that holds it wins).
 */
describe('segments that overlap', () => {
  const maskOf = (from: number, to: number) => {
    const mask = new Uint8Array(smallVoxelCount);
    mask.fill(1, from, to);
    return mask;
  };

  it('keeps a tumour drawn inside the liver, whatever its segment number, and reports it', async () => {
    for (const [liverNumber, tumourNumber] of [
      [1, 2],
      [2, 1],
    ]) {
      const seg = writeDicomSeg({
        grid: smallGrid,
        segments: [
          { segmentNumber: liverNumber, label: 'Liver', type: typeOfKind.liver },
          { segmentNumber: tumourNumber, label: 'Tumour 1', type: typeOfKind.tumour },
        ].sort((a, b) => a.segmentNumber - b.segmentNumber),
        masks: new Map([
          [liverNumber, maskOf(0, smallVoxelCount)],
          [tumourNumber, maskOf(20, 23)],
        ]),
      });
      const response = await importFile(smallSeries.id, seg);
      expect(response.status, JSON.stringify(response.body)).toBe(201);
      const expected = Array.from({ length: smallVoxelCount }, (_, index) =>
        index >= 20 && index < 23 ? tumourNumber : liverNumber,
      );
      expect(await storedLabels(smallSeries.id)).toEqual(expected);
      const byValue = new Map(structuresOf(response).map((entry) => [entry.labelValue, entry]));
      expect(byValue.get(liverNumber)).toMatchObject({ kind: 'liver', voxelCount: 57 });
      expect(byValue.get(tumourNumber)).toMatchObject({ kind: 'tumour', voxelCount: 3 });
      const { overlaps } = response.body as StructureImportResult;
      expect(overlaps).toEqual([
        {
          keptSegment: tumourNumber,
          keptName: 'Tumour 1',
          keptKind: 'tumour',
          lostSegment: liverNumber,
          lostName: 'Liver',
          lostKind: 'liver',
          voxelCount: 3,
          message:
            'Segment “Tumour 1” overlapped “Liver” in 3 voxels; tumour kept (it ranks before liver).',
        },
      ]);
    }
    const [event] = await testApp.orm.em
      .fork()
      .find(
        AuditEvent,
        { entityId: smallSeries.id, action: 'structures.import' },
        { orderBy: { at: 'desc' }, limit: 1 },
      );
    expect(event.detail).toMatchObject({ overlapCount: 1 });
  });

  it('gives each voxel to the first kind of tumour, vessel, organ, liver, skin', async () => {
    // Nested masks on the 60 voxels: skin all, liver 0–39, gallbladder 30–44, portal vein
    // 10–19, tumour 15–32.
    const masks = new Map([
      [1, maskOf(0, 60)],
      [2, maskOf(0, 40)],
      [3, maskOf(30, 45)],
      [4, maskOf(10, 20)],
      [5, maskOf(15, 33)],
    ]);
    const kindOrder = [5, 4, 3, 2, 1]; // tumour, portal vein, gallbladder, liver, skin
    const seg = writeDicomSeg({
      grid: smallGrid,
      segments: [
        { segmentNumber: 1, label: 'Skin', type: typeOfKind.skin },
        { segmentNumber: 2, label: 'Liver', type: typeOfKind.liver },
        { segmentNumber: 3, label: 'Gallbladder', type: typeOfKind.gallbladder },
        { segmentNumber: 4, label: 'Portal vein', type: typeOfKind['portal-vein'] },
        { segmentNumber: 5, label: 'Tumour', type: typeOfKind.tumour },
      ],
      masks,
    });
    const response = await importFile(smallSeries.id, seg);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    // The oracle: each voxel's first claimant in kind order; each other claimant lost it to that one.
    const expected: number[] = [];
    const lost = new Map<string, number>();
    for (let index = 0; index < smallVoxelCount; index++) {
      const claimants = kindOrder.filter((segment) => masks.get(segment)?.[index] === 1);
      expected.push(claimants[0] ?? 0);
      for (const loser of claimants.slice(1)) {
        const key = `${claimants[0]}>${loser}`;
        lost.set(key, (lost.get(key) ?? 0) + 1);
      }
    }
    expect(await storedLabels(smallSeries.id)).toEqual(expected);
    const { overlaps } = response.body as StructureImportResult;
    expect(
      Object.fromEntries(
        overlaps.map((overlap) => [
          `${overlap.keptSegment}>${overlap.lostSegment}`,
          overlap.voxelCount,
        ]),
      ),
    ).toEqual(Object.fromEntries(lost));
  });

  it('keeps the smaller of two tumours that overlap (the same rank)', async () => {
    const seg = writeDicomSeg({
      grid: smallGrid,
      segments: [
        { segmentNumber: 1, label: 'Tumour large', type: typeOfKind.tumour },
        { segmentNumber: 2, label: 'Tumour small', type: typeOfKind.tumour },
      ],
      masks: new Map([
        [1, maskOf(0, 10)],
        [2, maskOf(8, 11)],
      ]),
    });
    const response = await importFile(smallSeries.id, seg);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect((await storedLabels(smallSeries.id)).slice(0, 12)).toEqual([
      1, 1, 1, 1, 1, 1, 1, 1, 2, 2, 2, 0,
    ]);
    const [overlap] = (response.body as StructureImportResult).overlaps;
    expect(overlap).toMatchObject({ keptSegment: 2, lostSegment: 1, voxelCount: 2 });
    expect(overlap.message).toContain('the smaller of two of the same rank');
  });

  it('refuses an overlap of a segment of unknown kind until the labels field names it', async () => {
    // Segment 9 has no row yet, so no earlier kind either (a second import would use that).
    const write = () =>
      writeDicomSeg({
        grid: smallGrid,
        segments: [
          { segmentNumber: 1, label: 'Liver', type: typeOfKind.liver },
          { segmentNumber: 9, label: 'Region B' },
        ],
        masks: new Map([
          [1, maskOf(0, 30)],
          [9, maskOf(25, 35)],
        ]),
      });
    const refused = await importFile(smallSeries.id, write());
    expect(refused.status).toBe(400);
    expect(problemOf(refused).type).toBe('urn:emberline:problem:structures:segment-overlap');
    expect(problemOf(refused).detail).toContain('Segments 1 and 9');
    expect(problemOf(refused).detail).toContain('5 in all');
    expect(problemOf(refused).detail).toContain('segment 9 has none');
    const named = await importFile(smallSeries.id, write(), { labels: '{"9":"tumour"}' });
    expect(named.status, JSON.stringify(named.body)).toBe(201);
    expect((named.body as StructureImportResult).overlaps).toMatchObject([
      { keptSegment: 9, lostSegment: 1, voxelCount: 5 },
    ]);
  });
});

describe('refusals', () => {
  const labels = randomSmallLabels(3);
  const rotated = (degrees: number): [Vec3, Vec3] => {
    const angle = (degrees * Math.PI) / 180;
    return [
      [Math.cos(angle), Math.sin(angle), 0],
      [-Math.sin(angle), Math.cos(angle), 0],
    ];
  };

  it.each([
    ['an origin shifted 5 mm along x', { originShiftLps: [5, 0, 0] as Vec3 }, '5.00 mm away'],
    ['frames between slices', { originShiftLps: [0, 0, 1.25] as Vec3 }, '1.25 mm away'],
    ['frames beyond the last slice', { originShiftLps: [0, 0, 25] as Vec3 }, "outside the series'"],
    [
      'another pixel spacing',
      { pixelSpacingMm: [0.7, 0.9] as [number, number] },
      'Pixel Spacing (0028,0030) 0.7\\0.9 mm',
    ],
    [
      'another orientation (10° about z)',
      { rowDirection: rotated(10)[0], columnDirection: rotated(10)[1] },
      'Image Orientation (Patient)',
    ],
    ['another frame size', { columns: 6 }, '6 columns × 3 rows'],
  ])('refuses a SEG with %s (400, grid-mismatch)', async (_case, written, expected) => {
    const response = await importFile(smallSeries.id, smallSeg(labels, { written }));
    expect(response.status, JSON.stringify(response.body)).toBe(400);
    expect(problemOf(response).type).toBe('urn:emberline:problem:structures:grid-mismatch');
    expect(problemOf(response).detail).toContain(expected);
    expect(problemOf(response).detail).toContain('not resampled');
  });

  it('keeps the earlier import when a SEG is refused', async () => {
    const before = await importFile(smallSeries.id, smallSeg(labels));
    expect(before.status).toBe(201);
    const shifted = smallSeg(randomSmallLabels(4), { written: { originShiftLps: [0, 2, 0] } });
    expect((await importFile(smallSeries.id, shifted)).status).toBe(400);
    const after = await presenter.get(`/api/series/${smallSeries.id}/structures`);
    expect(after.body).toEqual(structuresOf(before));
    expect(await storedLabels(smallSeries.id)).toEqual(Array.from(labels));
  });

  it('refuses a DICOM file that is not a segmentation (a CT slice) with 415', async () => {
    const response = await importFile(smallSeries.id, new Uint8Array(generated.slices[0]));
    expect(response.status).toBe(415);
    expect(problemOf(response).type).toBe('urn:emberline:problem:structures:not-segmentation');
    // CT Image Storage, DICOM PS3.4 B.5 (from memory).
    expect(problemOf(response).detail).toContain('1.2.840.10008.5.1.4.1.1.2 (CT Image Storage)');
  });

  it.each([
    ['inside its Pixel Data', (length: number) => length - 2],
    ['inside its functional groups', (length: number) => Math.floor(length / 2)],
  ])('refuses a SEG truncated %s (400, dicom-truncated)', async (_where, cutAt) => {
    const seg = smallSeg(labels);
    const response = await importFile(smallSeries.id, seg.subarray(0, cutAt(seg.length)));
    expect(response.status, JSON.stringify(response.body)).toBe(400);
    expect(problemOf(response).type).toBe('urn:emberline:problem:structures:dicom-truncated');
    expect(problemOf(response).detail).toContain('truncated');
  });

  it('refuses a compressed transfer syntax with 415, naming the uncompressed ones', async () => {
    const seg = smallSeg(labels);
    const text = Buffer.from(seg).toString('latin1');
    // The same length: Explicit VR Little Endian → RLE Lossless (PS3.5 A.4.2; from memory).
    const at = text.indexOf('1.2.840.10008.1.2.1\0');
    expect(at).toBeGreaterThan(128);
    seg.set(Buffer.from('1.2.840.10008.1.2.5', 'latin1'), at);
    const response = await importFile(smallSeries.id, seg);
    expect(response.status).toBe(415);
    expect(problemOf(response).detail).toContain('1.2.840.10008.1.2.5');
    expect(problemOf(response).detail).toContain('Explicit VR Little Endian');
  });
});

describe('de-identification: a SEG keeps only its voxels and segment labels', () => {
  const identifying = {
    PatientName: 'Quill^QXSEGPATIENT',
    PatientID: 'QXSEGID-4471',
    PatientBirthDate: '19570213',
    InstitutionName: 'QXSEGHOSPITAL',
    ReferringPhysicianName: 'Marguerite^QXSEGREFERRER',
    AccessionNumber: 'QXSEGACC',
    StudyDescription: 'QXSEGSTUDY',
    SeriesDescription: 'QXSEGSERIES',
    ContentCreatorName: 'Quill^QXSEGCREATOR',
  };
  const forbidden = [
    'QXSEGPATIENT',
    'QXSEGID-4471',
    '19570213',
    'QXSEGHOSPITAL',
    'QXSEGREFERRER',
    'QXSEGACC',
    'QXSEGSTUDY',
    'QXSEGSERIES',
    'QXSEGCREATOR',
    'QXSEGDESC',
    'Marguerite',
    // The writer's UID root: no UID of the file is kept either.
    '1.2.826.0.1.3680043.10.99998',
  ];

  function labelMapFiles(dir = join(fileStoreDir, 'label-maps')): string[] {
    return readdirSync(dir, { withFileTypes: true }).flatMap((entry) =>
      entry.isDirectory() ? labelMapFiles(join(dir, entry.name)) : [join(dir, entry.name)],
    );
  }

  it('leaves no patient attribute of the SEG in the database dump, the label maps or the logs', async () => {
    const labels = randomSmallLabels(21);
    const seg = (overrides: Partial<SegSpec>) =>
      smallSeg(labels, {
        extraAttributes: identifying,
        extraSegmentAttributes: { SegmentDescription: 'QXSEGDESC drawn for Marguerite Quill' },
        ...overrides,
      });
    const refused = seg({ written: { originShiftLps: [3, 0, 0] } });
    const sent = Buffer.from(refused).toString('latin1');
    for (const value of forbidden) expect(sent.includes(value), `${value} in the file`).toBe(true);

    const refusal = await importFile(smallSeries.id, refused);
    expect(refusal.status).toBe(400);
    const accepted = await importFile(smallSeries.id, seg({}));
    expect(accepted.status, JSON.stringify(accepted.body)).toBe(201);
    expect(structuresOf(accepted).map((entry) => entry.name)).toEqual(['Liver', 'Tumour']);

    const haystacks = {
      refusal: JSON.stringify(refusal.body),
      answer: JSON.stringify(accepted.body),
      'database dump': execFileSync(
        '/usr/lib/postgresql/15/bin/pg_dump',
        ['--no-owner', inject('databaseUrl')],
        { encoding: 'latin1', maxBuffer: 256 * 1024 * 1024 },
      ),
      'label map files': labelMapFiles()
        .map((file) => readFileSync(file).toString('latin1'))
        .join('\n'),
      logs: testApp.logs.join('\n'),
    };
    for (const [where, text] of Object.entries(haystacks)) {
      expect(
        forbidden.filter((value) => text.includes(value)),
        `identifying values in the ${where}`,
      ).toEqual([]);
    }
    const rows = await testApp.orm.em.fork().find(Structure, { series: smallSeries.id });
    expect(rows.map((row) => row.name).sort()).toEqual(['Liver', 'Tumour']);
  });
});
