/**
 * The invented abdominal CT of sample-data/ read back independently of its writer: DICOM with
 * dicom-parser (dcmjs wrote it), the NIfTI-1 label map with a few lines of DataView code here,
 * and the result compared with the manifest's ground truth.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import dicomParser, { type DataSet } from 'dicom-parser';
import { gunzipSync } from 'fflate';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { geometryFromNiftiAffine, geometryFromSlices, type AffineMatrix } from '@emberline/shared';
import { generateAbdomenCt, type GeneratedAbdomenCt } from '../../sample-data/generate-abdomen-ct';

const PS3_3 = 'DICOM PS3.3 C.7.6.2.1.1';
const NIFTI_1 = 'NIfTI-1 header spec (nifti1.h)';
const COMMON_PRACTICE = 'common practice, from memory';

type Vec3 = [number, number, number];

const generated = generateAbdomenCt();
const { manifest } = generated;

// ---------------------------------------------------------------------------------------------
// DICOM, read with dicom-parser

interface ParsedSlice {
  dataSet: DataSet;
  positionLps: Vec3;
  rowDirection: Vec3;
  columnDirection: Vec3;
  /** Pixel Spacing: [row spacing Δj, column spacing Δi], millimetres. */
  pixelSpacingMm: [number, number];
  rows: number;
  columns: number;
}

function requiredString(dataSet: DataSet, tag: string): string {
  const text = dataSet.string(tag);
  if (text === undefined) throw new Error(`attribute ${tag} is missing`);
  return text;
}

function decimals(dataSet: DataSet, tag: string): number[] {
  return requiredString(dataSet, tag).split('\\').map(Number);
}

function requiredUint16(dataSet: DataSet, tag: string): number {
  const value = dataSet.uint16(tag);
  if (value === undefined) throw new Error(`attribute ${tag} is missing`);
  return value;
}

function parseSlice(file: ArrayBuffer): ParsedSlice {
  const dataSet = dicomParser.parseDicom(new Uint8Array(file));
  const orientation = decimals(dataSet, 'x00200037');
  const [x, y, z] = decimals(dataSet, 'x00200032');
  const [rowSpacingMm, columnSpacingMm] = decimals(dataSet, 'x00280030');
  return {
    dataSet,
    positionLps: [x, y, z],
    rowDirection: [orientation[0], orientation[1], orientation[2]],
    columnDirection: [orientation[3], orientation[4], orientation[5]],
    pixelSpacingMm: [rowSpacingMm, columnSpacingMm],
    rows: requiredUint16(dataSet, 'x00280010'),
    columns: requiredUint16(dataSet, 'x00280011'),
  };
}

/** Stored pixel values (signed 16-bit little endian, Pixel Representation 1), row by row. */
function storedPixels(dataSet: DataSet): Int16Array {
  const element = dataSet.elements.x7fe00010;
  const view = new DataView(
    dataSet.byteArray.buffer,
    dataSet.byteArray.byteOffset + element.dataOffset,
    element.length,
  );
  return Int16Array.from({ length: element.length / 2 }, (_, index) =>
    view.getInt16(2 * index, true),
  );
}

const cross = (a: Vec3, b: Vec3): Vec3 => [
  a[1] * b[2] - a[2] * b[1],
  a[2] * b[0] - a[0] * b[2],
  a[0] * b[1] - a[1] * b[0],
];
const dot = (a: Vec3, b: Vec3) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
const distanceMm = (a: Vec3, b: Vec3) => Math.hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2]);

/**
 * P = S + X·Δi·i + Y·Δj·j (PS3.3 C.7.6.2.1.1): i the column index with Δi = PixelSpacing[1],
 * j the row index with Δj = PixelSpacing[0], X and Y the row and column directions of Image
 * Orientation (Patient), S its Image Position (Patient).
 */
function patientPosition(slice: ParsedSlice, i: number, j: number): Vec3 {
  const [deltaJ, deltaI] = slice.pixelSpacingMm;
  const [s, x, y] = [slice.positionLps, slice.rowDirection, slice.columnDirection];
  return [0, 1, 2].map((axis) => s[axis] + x[axis] * deltaI * i + y[axis] * deltaJ * j) as Vec3;
}

/** The series sorted along the slice normal, and its HU (stored × slope + intercept). */
interface Series {
  slices: ParsedSlice[];
  normal: Vec3;
  /** HU, i fastest, then j, then k in sorted order. */
  hu: Int16Array;
}

function readSeries(files: readonly ArrayBuffer[]): Series {
  const parsed = files.map(parseSlice);
  const normal = cross(parsed[0].rowDirection, parsed[0].columnDirection);
  const slices = [...parsed].sort(
    (a, b) => dot(a.positionLps, normal) - dot(b.positionLps, normal),
  );
  const pixelsPerSlice = slices[0].rows * slices[0].columns;
  const hu = new Int16Array(pixelsPerSlice * slices.length);
  slices.forEach((slice, k) => {
    const slope = decimals(slice.dataSet, 'x00281053')[0];
    const intercept = decimals(slice.dataSet, 'x00281052')[0];
    storedPixels(slice.dataSet).forEach((stored, pixel) => {
      hu[k * pixelsPerSlice + pixel] = stored * slope + intercept;
    });
  });
  return { slices, normal, hu };
}

// ---------------------------------------------------------------------------------------------
// NIfTI-1, read with DataView at the offsets of nifti1.h (all little endian here)

interface NiftiLabelMap {
  sizeofHdr: number; // int32 at 0
  dim: number[]; // int16[8] at 40
  intentCode: number; // int16 at 68
  datatype: number; // int16 at 70 (2 = DT_UINT8)
  bitpix: number; // int16 at 72
  pixdim: number[]; // float32[8] at 76; pixdim[0] is qfac
  voxOffset: number; // float32 at 108
  xyztUnits: number; // uint8 at 123 (2 = NIFTI_UNITS_MM)
  qformCode: number; // int16 at 252
  sformCode: number; // int16 at 254
  quaternion: Vec3; // quatern_b, _c, _d: float32 at 256, 260, 264
  qoffset: Vec3; // qoffset_x, _y, _z: float32 at 268, 272, 276
  srow: number[][]; // srow_x, srow_y, srow_z: float32[4] each at 280, 296, 312
  magic: string; // char[4] at 344
  voxels: Uint8Array; // from vox_offset
}

function readNifti(gzipped: Uint8Array): NiftiLabelMap {
  const bytes = gunzipSync(gzipped);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const int16s = (offset: number, count: number) =>
    Array.from({ length: count }, (_, index) => view.getInt16(offset + 2 * index, true));
  const float32s = (offset: number, count: number) =>
    Array.from({ length: count }, (_, index) => view.getFloat32(offset + 4 * index, true));
  const voxOffset = view.getFloat32(108, true);
  const [b, c, d] = float32s(256, 3);
  const [qx, qy, qz] = float32s(268, 3);
  return {
    sizeofHdr: view.getInt32(0, true),
    dim: int16s(40, 8),
    intentCode: view.getInt16(68, true),
    datatype: view.getInt16(70, true),
    bitpix: view.getInt16(72, true),
    pixdim: float32s(76, 8),
    voxOffset,
    xyztUnits: view.getUint8(123),
    qformCode: view.getInt16(252, true),
    sformCode: view.getInt16(254, true),
    quaternion: [b, c, d],
    qoffset: [qx, qy, qz],
    srow: [float32s(280, 4), float32s(296, 4), float32s(312, 4)],
    magic: String.fromCharCode(...bytes.subarray(344, 348)),
    voxels: bytes.subarray(voxOffset),
  };
}

/**
 * The qform's rotation (nifti1.h, method 2): a = √(1 − b² − c² − d²) and
 * R = [[a²+b²−c²−d², 2(bc−ad), 2(bd+ac)], [2(bc+ad), a²+c²−b²−d², 2(cd−ab)],
 * [2(bd−ac), 2(cd+ab), a²+d²−c²−b²]].
 */
function qformRotation([b, c, d]: Vec3): number[][] {
  const a = Math.sqrt(Math.max(0, 1 - b * b - c * c - d * d));
  return [
    [a * a + b * b - c * c - d * d, 2 * (b * c - a * d), 2 * (b * d + a * c)],
    [2 * (b * c + a * d), a * a + c * c - b * b - d * d, 2 * (c * d - a * b)],
    [2 * (b * d - a * c), 2 * (c * d + a * b), a * a + d * d - c * c - b * b],
  ];
}

/** Float32 fields hold 7 significant digits: 1e-4 mm covers them at these magnitudes. */
const FLOAT32_MM = 1e-4;

// ---------------------------------------------------------------------------------------------

/**
 * Identifiers of the structure kinds as DEVELOPERS.md ("Structure kinds") lists them, written out
 * here so that the check does not lean on the code it checks.
 */
const PRODUCT_KINDS = [
  'tumour',
  'liver',
  'portal-vein',
  'hepatic-vein',
  'hepatic-artery',
  'bile-duct',
  'gallbladder',
  'bowel',
  'stomach',
  'lung',
  'heart',
  'kidney',
  'bone',
  'skin',
];

/**
 * Median HU each structure must show, by the manifest's structure name: contrast-enhanced CT in
 * the portal-venous phase, common practice, from memory (not from any dataset).
 */
const HU_BANDS: Record<string, { lowest: number; highest: number; why: string }> = {
  liver: { lowest: 40, highest: 130, why: 'parenchyma, unenhanced ≈ 55, portal-venous ≈ 100' },
  'tumour-segment-8': { lowest: 10, highest: 60, why: 'hypo-attenuating lesion' },
  'tumour-segment-6': { lowest: 10, highest: 60, why: 'hypo-attenuating lesion' },
  'portal-vein': { lowest: 120, highest: 250, why: 'enhanced vein, portal-venous phase' },
  'hepatic-vein': { lowest: 120, highest: 250, why: 'enhanced vein, portal-venous phase' },
  'hepatic-artery': { lowest: 120, highest: 300, why: 'enhanced artery' },
  'bile-duct': { lowest: -10, highest: 30, why: 'bile, near water' },
  gallbladder: { lowest: -10, highest: 30, why: 'bile, near water' },
  'right-kidney': { lowest: 80, highest: 250, why: 'enhanced renal parenchyma' },
  'left-kidney': { lowest: 80, highest: 250, why: 'enhanced renal parenchyma' },
  colon: { lowest: -1024, highest: -700, why: 'mostly gas, −1000' },
  'small-bowel': { lowest: 10, highest: 70, why: 'collapsed loops, wall and fluid' },
  stomach: { lowest: -20, highest: 60, why: 'mostly fluid content near water, wall ≈ 40' },
  'lung-bases': { lowest: -950, highest: -700, why: 'aerated lung' },
  heart: { lowest: 40, highest: 250, why: 'myocardium and enhanced blood pool' },
  bone: { lowest: 300, highest: 1500, why: 'ribs and vertebrae, cortex and marrow' },
  skin: { lowest: 0, highest: 80, why: 'dermis, soft tissue' },
};

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? sorted[middle] : (sorted[middle - 1] + sorted[middle]) / 2;
}

function bytesOf(generation: GeneratedAbdomenCt): Uint8Array[] {
  return [
    ...generation.slices.map((slice) => new Uint8Array(slice)),
    generation.labelMapNiftiGz,
    new TextEncoder().encode(JSON.stringify(generation.labels)),
    new TextEncoder().encode(JSON.stringify(generation.manifest)),
  ];
}

describe('the invented abdominal CT of sample-data/', () => {
  const series = readSeries(generated.slices);
  const nifti = readNifti(generated.labelMapNiftiGz);
  const [columns, rows, sliceCount] = manifest.grid.dimensions;
  const offset = (i: number, j: number, k: number) => i + columns * (j + rows * k);
  const first = series.slices[0];
  const sliceSpacingMm = decimals(first.dataSet, 'x00180088')[0];
  /** Centre of voxel (i, j, k), LPS, from the parsed DICOM alone. */
  const voxelCentre = (i: number, j: number, k: number): Vec3 =>
    patientPosition(series.slices[k], i, j);
  const labelOf = (i: number, j: number, k: number) => nifti.voxels[offset(i, j, k)];
  /** Calls `visit` for every voxel whose centre may lie within the box (LPS), and a few more. */
  const forEachVoxelNear = (
    minLps: Vec3,
    maxLps: Vec3,
    visit: (i: number, j: number, k: number) => void,
  ) => {
    const corners = [0, 1, 2, 3, 4, 5, 6, 7].map((corner) =>
      [0, 1, 2].map((axis) => ((corner >> axis) & 1 ? maxLps[axis] : minLps[axis])),
    );
    const axes = [first.rowDirection, first.columnDirection, series.normal];
    const spacings = [first.pixelSpacingMm[1], first.pixelSpacingMm[0], sliceSpacingMm];
    const extents = [columns, rows, sliceCount];
    const [low, high] = [Math.min, Math.max].map((pick, side) =>
      axes.map((axis, index) => {
        const indices = corners.map(
          (corner) =>
            dot([0, 1, 2].map((c) => corner[c] - first.positionLps[c]) as Vec3, axis) /
            spacings[index],
        );
        const bound =
          side === 0 ? Math.floor(pick(...indices)) - 1 : Math.ceil(pick(...indices)) + 1;
        return Math.min(extents[index] - 1, Math.max(0, bound));
      }),
    );
    for (let k = low[2]; k <= high[2]; k++) {
      for (let j = low[1]; j <= high[1]; j++) {
        for (let i = low[0]; i <= high[0]; i++) visit(i, j, k);
      }
    }
  };
  const countOf = (labelValue: number) =>
    nifti.voxels.reduce((count, value) => count + (value === labelValue ? 1 : 0), 0);
  // From the DICOM decimals: the NIfTI's float32 pixdim are 1e-8 off 0.8.
  const voxelVolumeMl = (first.pixelSpacingMm[0] * first.pixelSpacingMm[1] * sliceSpacingMm) / 1000;

  describe('DICOM files (read with dicom-parser)', () => {
    it('starts every file with a 128-byte zero preamble and "DICM" (DICOM PS3.10 7.1)', () => {
      expect(generated.slices).toHaveLength(sliceCount);
      for (const file of generated.slices) {
        const bytes = new Uint8Array(file);
        expect(bytes.subarray(0, 128).every((byte) => byte === 0)).toBe(true);
        expect(String.fromCharCode(...bytes.subarray(128, 132))).toBe('DICM');
      }
    });

    it('declares CT Image Storage in Explicit VR Little Endian, in file meta and data set', () => {
      for (const { dataSet } of series.slices) {
        // PS3.4 B.5 (CT Image Storage), PS3.5 A.2 (Explicit VR Little Endian).
        expect(dataSet.string('x00020002')).toBe('1.2.840.10008.5.1.4.1.1.2');
        expect(dataSet.string('x00080016')).toBe('1.2.840.10008.5.1.4.1.1.2');
        expect(dataSet.string('x00020010')).toBe('1.2.840.10008.1.2.1');
        expect(dataSet.string('x00020003')).toBe(dataSet.string('x00080018'));
        expect(dataSet.string('x00080060')).toBe('CT');
      }
    });

    it('names the plainly invented patient and marks the images synthetic', () => {
      for (const { dataSet } of series.slices) {
        expect(dataSet.string('x00100010')).toBe('EMBERLINE^DEMO');
        expect(dataSet.string('x00100020')).toBe('DEMO-0001');
        expect(dataSet.string('x0008001c')).toBe('YES'); // Synthetic Data
      }
    });

    it('stores signed 16-bit pixels as HU + 1024: Rescale Slope 1, Intercept −1024', () => {
      for (const { dataSet, rows: sliceRows, columns: sliceColumns } of series.slices) {
        expect(requiredUint16(dataSet, 'x00280100')).toBe(16); // Bits Allocated
        expect(requiredUint16(dataSet, 'x00280101')).toBe(16); // Bits Stored
        expect(requiredUint16(dataSet, 'x00280102')).toBe(15); // High Bit
        expect(requiredUint16(dataSet, 'x00280103')).toBe(1); // Pixel Representation: signed
        expect(decimals(dataSet, 'x00281053')).toEqual([1]);
        expect(decimals(dataSet, 'x00281052')).toEqual([-1024]);
        expect(dataSet.elements.x7fe00010.vr).toBe('OW');
        const stored = storedPixels(dataSet);
        expect(stored).toHaveLength(sliceRows * sliceColumns);
        // HU clamped to −1024…3071 (the README's documented range) → stored 0…4095.
        expect(stored.every((value) => value >= 0 && value <= 4095)).toBe(true);
      }
    });

    it('shares one study, series and frame of reference under the documented UID root', () => {
      // The README's root: 2.25. and the decimal of UUID f161e11a-6b18-4dbd-8da0-a7b47e1b0895.
      const root = `2.25.${BigInt('0xf161e11a6b184dbd8da0a7b47e1b0895').toString()}`;
      expect(manifest.dicom.uidRoot).toBe(root);
      const sopInstanceUids = series.slices.map(({ dataSet }) => dataSet.string('x00080018'));
      expect(new Set(sopInstanceUids).size).toBe(sliceCount);
      for (const { dataSet } of series.slices) {
        expect(dataSet.string('x0020000d')).toBe(manifest.dicom.studyInstanceUid);
        expect(dataSet.string('x0020000e')).toBe(manifest.dicom.seriesInstanceUid);
        expect(dataSet.string('x00200052')).toBe(manifest.dicom.frameOfReferenceUid);
        for (const tag of ['x0020000d', 'x0020000e', 'x00200052', 'x00080018']) {
          const uid = requiredString(dataSet, tag);
          expect(uid.startsWith(`${root}.`)).toBe(true);
          // PS3.5 9.1: at most 64 characters, digits and dots, no leading zero in a component.
          expect(uid.length).toBeLessThanOrEqual(64);
          expect(uid).toMatch(/^(0|[1-9]\d*)(\.(0|[1-9]\d*))*$/);
        }
      }
    });
  });

  describe(`geometry (${PS3_3})`, () => {
    it('spaces the slices evenly along the normal X × Y, at Spacing Between Slices', () => {
      const positionsMm = series.slices.map((slice) => dot(slice.positionLps, series.normal));
      for (let k = 1; k < positionsMm.length; k++) {
        expect(positionsMm[k] - positionsMm[k - 1]).toBeCloseTo(sliceSpacingMm, 6);
      }
      expect(sliceSpacingMm).toBe(manifest.grid.spacingMm[2]);
      for (const slice of series.slices) {
        expect([...slice.rowDirection, ...slice.columnDirection]).toEqual([
          ...first.rowDirection,
          ...first.columnDirection,
        ]);
        // Stacked straight along the normal: no in-plane offset between slices.
        const along = dot(slice.positionLps, series.normal) - dot(first.positionLps, series.normal);
        const offsetMm = distanceMm(slice.positionLps, [
          first.positionLps[0] + series.normal[0] * along,
          first.positionLps[1] + series.normal[1] * along,
          first.positionLps[2] + series.normal[2] * along,
        ]);
        expect(offsetMm).toBeLessThan(1e-9);
      }
    });

    it("is stacked by the product's geometryFromSlices into the manifest's grid", () => {
      const { geometry } = geometryFromSlices(
        series.slices.map((slice) => ({
          imagePositionPatient: slice.positionLps,
          imageOrientationPatient: [...slice.rowDirection, ...slice.columnDirection],
          pixelSpacing: slice.pixelSpacingMm,
          rows: slice.rows,
          columns: slice.columns,
        })),
      );
      expect(geometry.dimensions).toEqual(manifest.grid.dimensions);
      expect(geometry.originLps).toEqual(manifest.grid.originLps);
      geometry.spacingMm.forEach((spacingMm, axis) =>
        expect(spacingMm).toBeCloseTo(manifest.grid.spacingMm[axis], 9),
      );
      expect(geometry.direction).toEqual([
        manifest.grid.rowDirectionLps,
        manifest.grid.columnDirectionLps,
        manifest.grid.sliceDirectionLps,
      ]);
    });

    it.each(manifest.tumours)(
      'finds $name at the manifest centre by P = S + X·Δi·i + Y·Δj·j, with its label there',
      (tumour) => {
        const centre = tumour.centreLps;
        const k = Math.round(
          (dot(centre, series.normal) - dot(first.positionLps, series.normal)) / sliceSpacingMm,
        );
        const slice = series.slices[k];
        const fromS: Vec3 = [0, 1, 2].map((axis) => centre[axis] - slice.positionLps[axis]) as Vec3;
        const i = Math.round(dot(fromS, slice.rowDirection) / slice.pixelSpacingMm[1]);
        const j = Math.round(dot(fromS, slice.columnDirection) / slice.pixelSpacingMm[0]);
        // The nearest voxel centre lies within half a voxel diagonal of any point.
        const halfDiagonalMm =
          Math.hypot(slice.pixelSpacingMm[1], slice.pixelSpacingMm[0], sliceSpacingMm) / 2;
        expect(distanceMm(patientPosition(slice, i, j), centre)).toBeLessThanOrEqual(
          halfDiagonalMm,
        );
        expect(labelOf(i, j, k)).toBe(tumour.labelValue);
        expect(generated.labels[String(tumour.labelValue)]).toBe('tumour');
        // Median of the 3 × 3 × 3 voxels around it (all inside a sphere of ≥ 9 mm): one voxel
        // alone carries the full noise, the median about a quarter of it.
        const neighbourhood: number[] = [];
        for (let dk = -1; dk <= 1; dk++) {
          for (let dj = -1; dj <= 1; dj++) {
            for (let di = -1; di <= 1; di++) {
              neighbourhood.push(series.hu[offset(i + di, j + dj, k + dk)]);
            }
          }
        }
        const band = HU_BANDS[tumour.name];
        expect(median(neighbourhood)).toBeGreaterThanOrEqual(band.lowest);
        expect(median(neighbourhood)).toBeLessThanOrEqual(band.highest);
      },
    );
  });

  describe(`attenuation (${COMMON_PRACTICE})`, () => {
    const huByLabel = new Map<number, number[]>();
    nifti.voxels.forEach((labelValue, index) => {
      if (labelValue === 0) return;
      const values = huByLabel.get(labelValue) ?? [];
      values.push(series.hu[index]);
      huByLabel.set(labelValue, values);
    });
    const medianOf = (labelValue: number) => median(huByLabel.get(labelValue) ?? []);

    it('has a documented HU band for every structure of the manifest', () => {
      expect(manifest.structures.map((structure) => structure.name).sort()).toEqual(
        Object.keys(HU_BANDS).sort(),
      );
    });

    it.each(manifest.structures.filter((structure) => structure.name in HU_BANDS))(
      'gives $name ($kind) a median HU within its band',
      (structure) => {
        const band = HU_BANDS[structure.name];
        const value = medianOf(structure.labelValue);
        expect(value, band.why).toBeGreaterThanOrEqual(band.lowest);
        expect(value, band.why).toBeLessThanOrEqual(band.highest);
      },
    );

    it('makes each tumour hypo-attenuating: its median at least 15 HU below the liver', () => {
      // A difference of 15 HU stands out from 10 HU of noise: conspicuous, common practice.
      const liverValue = manifest.structures.find((structure) => structure.kind === 'liver');
      if (!liverValue) throw new Error('no liver in the manifest');
      for (const tumour of manifest.tumours) {
        expect(medianOf(tumour.labelValue)).toBeLessThanOrEqual(
          medianOf(liverValue.labelValue) - 15,
        );
      }
    });

    it("adds noise of the manifest's standard deviation, centred on the nominal HU", () => {
      // Liver voxels whose six neighbours are liver too: one tissue, no edge.
      const liver = manifest.structures.find((structure) => structure.kind === 'liver');
      if (!liver) throw new Error('no liver in the manifest');
      const values: number[] = [];
      for (let k = 1; k < sliceCount - 1; k++) {
        for (let j = 1; j < rows - 1; j++) {
          for (let i = 1; i < columns - 1; i++) {
            const neighbours = [
              labelOf(i, j, k),
              labelOf(i - 1, j, k),
              labelOf(i + 1, j, k),
              labelOf(i, j - 1, k),
              labelOf(i, j + 1, k),
              labelOf(i, j, k - 1),
              labelOf(i, j, k + 1),
            ];
            if (neighbours.every((value) => value === liver.labelValue)) {
              values.push(series.hu[offset(i, j, k)]);
            }
          }
        }
      }
      const mean = values.reduce((sum, value) => sum + value, 0) / values.length;
      const variance =
        values.reduce((sum, value) => sum + (value - mean) ** 2, 0) / (values.length - 1);
      // Rounding to whole HU adds a variance of 1/12; the standard error of σ over tens of
      // thousands of voxels is under 1 %: 5 % leaves room for both.
      expect(values.length).toBeGreaterThan(10000);
      expect(Math.sqrt(variance)).toBeGreaterThan(0.95 * manifest.noise.standardDeviationHu);
      expect(Math.sqrt(variance)).toBeLessThan(1.05 * manifest.noise.standardDeviationHu);
      expect(Math.abs(mean - liver.nominalHu)).toBeLessThan(0.5);
    });
  });

  describe(`label map (${NIFTI_1})`, () => {
    it('writes a NIfTI-1 header: 348 bytes, magic "n+1", uint8 from byte 352, dim and pixdim', () => {
      expect(nifti.sizeofHdr).toBe(348);
      expect(nifti.magic).toBe('n+1\0');
      expect(nifti.voxOffset).toBe(352);
      expect(nifti.datatype).toBe(2); // DT_UINT8
      expect(nifti.bitpix).toBe(8);
      expect(nifti.intentCode).toBe(1002); // NIFTI_INTENT_LABEL
      expect(nifti.xyztUnits & 0x07).toBe(2); // NIFTI_UNITS_MM
      expect(nifti.dim.slice(0, 4)).toEqual([3, first.columns, first.rows, series.slices.length]);
      expect(nifti.voxels).toHaveLength(first.columns * first.rows * series.slices.length);
      expect(nifti.pixdim[1]).toBeCloseTo(first.pixelSpacingMm[1], 6);
      expect(nifti.pixdim[2]).toBeCloseTo(first.pixelSpacingMm[0], 6);
      expect(nifti.pixdim[3]).toBeCloseTo(sliceSpacingMm, 6);
    });

    it('puts sform and qform in RAS: the DICOM LPS matrix with x and y negated', () => {
      // Columns of the DICOM voxel-to-LPS matrix: X·Δi, Y·Δj, normal·Δk, and S.
      const lps: Vec3[] = [
        first.rowDirection.map((value) => value * first.pixelSpacingMm[1]) as Vec3,
        first.columnDirection.map((value) => value * first.pixelSpacingMm[0]) as Vec3,
        series.normal.map((value) => value * sliceSpacingMm) as Vec3,
        first.positionLps,
      ];
      const rasSign = [-1, -1, 1];
      expect(nifti.sformCode).toBeGreaterThan(0);
      expect(nifti.qformCode).toBeGreaterThan(0);
      const rotation = qformRotation(nifti.quaternion);
      const qfac = nifti.pixdim[0] === -1 ? -1 : 1;
      for (let row = 0; row < 3; row++) {
        for (let column = 0; column < 4; column++) {
          const expected = rasSign[row] * lps[column][row];
          expect(nifti.srow[row][column]).toBeCloseTo(expected, 4);
          // qform (method 2): R · diag(pixdim[1], pixdim[2], qfac·pixdim[3]), then qoffset.
          const fromQform =
            column === 3
              ? nifti.qoffset[row]
              : rotation[row][column] * nifti.pixdim[column + 1] * (column === 2 ? qfac : 1);
          expect(Math.abs(fromQform - expected)).toBeLessThan(FLOAT32_MM);
        }
      }
    });

    it("is read by the product's NIfTI code onto the same grid as the DICOM series", () => {
      const sform = [...nifti.srow, [0, 0, 0, 1]] as AffineMatrix;
      const geometry = geometryFromNiftiAffine(sform, [nifti.dim[1], nifti.dim[2], nifti.dim[3]]);
      // Direction cosines from float32 rows are unit vectors to 1e-7; `+ 0` turns −0 into 0.
      const roundedAxis = (value: number) => Math.round(value) + 0;
      geometry.originLps.forEach((valueMm, axis) =>
        expect(Math.abs(valueMm - first.positionLps[axis])).toBeLessThan(FLOAT32_MM),
      );
      expect(geometry.direction[0].map(roundedAxis)).toEqual(first.rowDirection);
      expect(geometry.direction[1].map(roundedAxis)).toEqual(first.columnDirection);
      expect(geometry.direction[2].map(roundedAxis)).toEqual(series.normal);
    });

    it('maps exactly the label values present to the structure kinds of the product', () => {
      const present = [...new Set(nifti.voxels)]
        .filter((value) => value !== 0)
        .sort((a, b) => a - b);
      expect(Object.keys(generated.labels).map(Number)).toEqual(present);
      for (const kind of Object.values(generated.labels)) expect(PRODUCT_KINDS).toContain(kind);
      expect(Object.values(generated.labels).filter((kind) => kind === 'tumour')).toHaveLength(2);
    });
  });

  describe('volumes and shapes against the manifest', () => {
    // The shapes of the structures list, and the spheres of the tumours list: both must hold.
    const analytic = [
      ...manifest.structures.flatMap((structure) =>
        structure.shape ? [{ ...structure, shape: structure.shape }] : [],
      ),
      ...manifest.tumours.map((tumour) => ({
        name: `${tumour.name} (tumours list)`,
        labelValue: tumour.labelValue,
        shape: { type: 'sphere' as const, centreLps: tumour.centreLps, radiusMm: tumour.radiusMm },
      })),
    ];

    it.each(analytic)(
      'paints $name whole: its label on exactly the voxel centres inside its shape',
      (structure) => {
        const shape = structure.shape;
        const semiAxesMm: Vec3 =
          shape.type === 'sphere'
            ? [shape.radiusMm, shape.radiusMm, shape.radiusMm]
            : shape.semiAxesMm;
        // Voxel centres from the parsed DICOM; a band of 1e-9 either side of the surface keeps
        // rounding from deciding (no centre falls in it here).
        let surelyInside = 0;
        let surelyInsideLabelled = 0;
        let onSurface = 0;
        const [low, high] = [-1, 1].map(
          (sign) =>
            [0, 1, 2].map((axis) => shape.centreLps[axis] + sign * semiAxesMm[axis]) as Vec3,
        );
        forEachVoxelNear(low, high, (i, j, k) => {
          const point = voxelCentre(i, j, k);
          const measure = [0, 1, 2].reduce(
            (sum, axis) => sum + ((point[axis] - shape.centreLps[axis]) / semiAxesMm[axis]) ** 2,
            0,
          );
          if (measure < 1 - 1e-9) {
            surelyInside++;
            if (labelOf(i, j, k) === structure.labelValue) surelyInsideLabelled++;
          } else if (measure <= 1 + 1e-9) onSurface++;
        });
        const counted = countOf(structure.labelValue);
        expect(surelyInside).toBeGreaterThan(0);
        expect(surelyInsideLabelled).toBe(surelyInside);
        expect(counted).toBeLessThanOrEqual(surelyInside + onSurface);
      },
    );

    it.each(manifest.tumours)(
      'measures $name within the voxel-size bound of 4/3·π·r³ ($radiusMm mm)',
      (tumour) => {
        // Every point of the ball of radius r − h lies in a counted voxel, and every counted
        // voxel lies in the ball of radius r + h, h being half the voxel's diagonal (a voxel
        // is counted when its centre is inside): V(r − h) ≤ counted volume ≤ V(r + h).
        const halfDiagonalMm =
          Math.hypot(first.pixelSpacingMm[1], first.pixelSpacingMm[0], sliceSpacingMm) / 2;
        const ballMl = (radiusMm: number) => ((4 / 3) * Math.PI * radiusMm ** 3) / 1000;
        const countedMl = countOf(tumour.labelValue) * voxelVolumeMl;
        expect(countedMl).toBeGreaterThanOrEqual(ballMl(tumour.radiusMm - halfDiagonalMm));
        expect(countedMl).toBeLessThanOrEqual(ballMl(tumour.radiusMm + halfDiagonalMm));
        expect(tumour.analyticVolumeMl).toBeCloseTo(ballMl(tumour.radiusMm), 5);
        expect(tumour.voxelVolumeMl).toBeCloseTo(countedMl, 5);
      },
    );

    it('reports each structure and vessel tree with the voxel count the label map holds', () => {
      for (const entry of [...manifest.structures, ...manifest.vessels]) {
        expect(entry.voxelCount, `label ${entry.labelValue}`).toBe(countOf(entry.labelValue));
        expect(entry.voxelVolumeMl).toBeCloseTo(countOf(entry.labelValue) * voxelVolumeMl, 5);
      }
    });

    it.each(manifest.tumours)(
      'keeps $name inside the liver: within 3 mm of it lie only liver and hepatic vessels',
      (tumour) => {
        const allowed = new Set(
          Object.entries(generated.labels)
            .filter(([, kind]) =>
              ['liver', 'portal-vein', 'hepatic-vein', 'hepatic-artery', 'bile-duct'].includes(
                kind,
              ),
            )
            .map(([value]) => Number(value)),
        );
        const found = new Set<number>();
        const reachMm = tumour.radiusMm + 3;
        const [low, high] = [-1, 1].map(
          (sign) => tumour.centreLps.map((value) => value + sign * reachMm) as Vec3,
        );
        forEachVoxelNear(low, high, (i, j, k) => {
          const fromCentreMm = distanceMm(voxelCentre(i, j, k), tumour.centreLps);
          if (fromCentreMm > tumour.radiusMm && fromCentreMm <= reachMm)
            found.add(labelOf(i, j, k));
        });
        expect([...found].filter((value) => !allowed.has(value))).toEqual([]);
      },
    );

    describe.each(manifest.vessels)('$kind', (tree) => {
      const segments = tree.branches.flatMap((branch) =>
        branch.centreLineLps.slice(1).map((end, index) => ({
          branch,
          start: branch.centreLineLps[index],
          end,
        })),
      );
      const axisDistanceMm = (point: Vec3, start: Vec3, end: Vec3) => {
        const along: Vec3 = [end[0] - start[0], end[1] - start[1], end[2] - start[2]];
        const fraction = Math.min(
          1,
          Math.max(
            0,
            dot([point[0] - start[0], point[1] - start[1], point[2] - start[2]], along) /
              dot(along, along),
          ),
        );
        return distanceMm(point, [
          start[0] + along[0] * fraction,
          start[1] + along[1] * fraction,
          start[2] + along[2] * fraction,
        ]);
      };

      it('carries its label at the voxel nearest every millimetre of its centre-lines', () => {
        // That voxel's centre is within half a voxel diagonal (1.37 mm) of the centre-line,
        // less than the thinnest radius (1.5 mm): inside the tube.
        const misses: string[] = [];
        for (const { branch, start, end } of segments) {
          const steps = Math.ceil(distanceMm(start, end));
          for (let step = 0; step <= steps; step++) {
            const point = [0, 1, 2].map(
              (axis) => start[axis] + ((end[axis] - start[axis]) * step) / steps,
            ) as Vec3;
            const fromOrigin: Vec3 = [0, 1, 2].map(
              (axis) => point[axis] - first.positionLps[axis],
            ) as Vec3;
            const i = Math.round(dot(fromOrigin, first.rowDirection) / first.pixelSpacingMm[1]);
            const j = Math.round(dot(fromOrigin, first.columnDirection) / first.pixelSpacingMm[0]);
            const k = Math.round(dot(fromOrigin, series.normal) / sliceSpacingMm);
            if (labelOf(i, j, k) !== tree.labelValue) misses.push(`${branch.name} ${point}`);
          }
        }
        expect(misses).toEqual([]);
      });

      it('labels no voxel farther from its centre-lines than the branch radius', () => {
        let worstExcessMm = -Infinity;
        for (let k = 0; k < sliceCount; k++) {
          for (let j = 0; j < rows; j++) {
            for (let i = 0; i < columns; i++) {
              if (labelOf(i, j, k) !== tree.labelValue) continue;
              const point = voxelCentre(i, j, k);
              const excessMm = Math.min(
                ...segments.map(
                  ({ branch, start, end }) => axisDistanceMm(point, start, end) - branch.radiusMm,
                ),
              );
              worstExcessMm = Math.max(worstExcessMm, excessMm);
            }
          }
        }
        expect(worstExcessMm).toBeGreaterThan(-Infinity);
        expect(worstExcessMm).toBeLessThanOrEqual(1e-9);
      });
    });
  });

  describe('determinism', () => {
    it('gives byte-identical files on a second run with the same seed', () => {
      const again = bytesOf(generateAbdomenCt());
      const once = bytesOf(generated);
      expect(again).toHaveLength(once.length);
      once.forEach((bytes, index) => expect(Buffer.compare(bytes, again[index])).toBe(0));
    });

    it('changes the noise and the UIDs, never the anatomy, with another seed', () => {
      const other = generateAbdomenCt({ seed: manifest.seed + 1 });
      expect(
        Buffer.compare(gunzipSync(other.labelMapNiftiGz), gunzipSync(generated.labelMapNiftiGz)),
      ).toBe(0);
      const otherHu = readSeries(other.slices).hu;
      const differing = otherHu.reduce(
        (count, value, index) => count + (value !== series.hu[index] ? 1 : 0),
        0,
      );
      expect(differing).toBeGreaterThan(otherHu.length / 2);
      expect(other.manifest.dicom.seriesInstanceUid).not.toBe(manifest.dicom.seriesInstanceUid);
    });
  });

  describe('command line', () => {
    let outDirectory = '';
    beforeAll(() => {
      outDirectory = mkdtempSync(join(tmpdir(), 'emberline-sample-ct-'));
    });
    afterAll(() => {
      rmSync(outDirectory, { recursive: true, force: true });
    });

    it('writes the same files to a folder as the API answers in memory', () => {
      const run = spawnSync(
        process.execPath,
        ['--import', 'tsx', 'sample-data/generate-abdomen-ct.ts', outDirectory],
        { encoding: 'utf8' },
      );
      expect(run.status, run.stderr).toBe(0);
      generated.sliceFileNames.forEach((name, index) =>
        expect(
          Buffer.compare(
            readFileSync(join(outDirectory, name)),
            new Uint8Array(generated.slices[index]),
          ),
        ).toBe(0),
      );
      expect(
        Buffer.compare(
          readFileSync(join(outDirectory, manifest.labelMap.fileName)),
          generated.labelMapNiftiGz,
        ),
      ).toBe(0);
      const readJson = (name: string): unknown =>
        JSON.parse(readFileSync(join(outDirectory, name), 'utf8'));
      expect(readJson(manifest.labelMap.labelsFileName)).toEqual(generated.labels);
      expect(readJson('manifest.json')).toEqual(manifest);
    });
  });
});
