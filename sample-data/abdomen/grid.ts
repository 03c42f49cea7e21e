/**
 * The voxel grid of the invented CT: axial slices, Image Orientation (Patient) (1, 0, 0, 0, 1, 0),
 * so rows run along +x (patient left) and columns along +y (posterior), and slices are stacked
 * along +z (head). LPS, millimetres.
 */
import type { BoundsMm } from './solids';
import type { Vec3 } from './vector';

export interface CtGrid {
  /** Extent of i (Columns (0028,0011)). */
  columns: number;
  /** Extent of j (Rows (0028,0010)). */
  rows: number;
  /** Extent of k, the number of slices. */
  slices: number;
  /** Δi: distance between columns, Pixel Spacing (0028,0030) value 2, millimetres. */
  columnSpacingMm: number;
  /** Δj: distance between rows, Pixel Spacing (0028,0030) value 1, millimetres. */
  rowSpacingMm: number;
  /** Δk: distance between slice centres along the normal, millimetres. */
  sliceSpacingMm: number;
  /** Centre of voxel (0, 0, 0): Image Position (Patient) of the first slice, LPS, millimetres. */
  originLps: Vec3;
}

/**
 * 192 × 160 × 64 voxels of 0.8 × 0.8 × 2.5 mm: a 153.6 × 128 × 160 mm box, centred on x = 0 and
 * y = 0, from z = −90 mm to z = +67.5 mm. Origins and spacings are exact in few decimals so that
 * the decimal strings of the DICOM files say exactly what the generator used.
 */
export const ABDOMEN_GRID: Readonly<CtGrid> = {
  columns: 192,
  rows: 160,
  slices: 64,
  columnSpacingMm: 0.8,
  rowSpacingMm: 0.8,
  sliceSpacingMm: 2.5,
  originLps: [-76.4, -63.6, -90],
};

/**
 * A clinical-size grid for benchmarks: 512 × 512 × 240 voxels of 0.7 × 0.7 × 1.25 mm (a
 * 358.4 × 358.4 × 300 mm field of view, typical of a contrast abdominal CT reconstructed at thin
 * slices; common practice), centred on x = 0 and y = 0 like the sample grid. The same invented
 * anatomy is painted on it, so figures compare across the two grids. Generated on demand, never
 * committed (`generate-abdomen-ct.ts --clinical`).
 */
export const CLINICAL_GRID: Readonly<CtGrid> = {
  columns: 512,
  rows: 512,
  slices: 240,
  columnSpacingMm: 0.7,
  rowSpacingMm: 0.7,
  sliceSpacingMm: 1.25,
  originLps: [-178.85, -178.85, -160],
};

/** Row direction X and column direction Y of Image Orientation (Patient); normal X × Y. */
export const ROW_DIRECTION: Vec3 = [1, 0, 0];
export const COLUMN_DIRECTION: Vec3 = [0, 1, 0];
export const SLICE_DIRECTION: Vec3 = [0, 0, 1];

export function voxelCount(grid: Readonly<CtGrid>): number {
  return grid.columns * grid.rows * grid.slices;
}

/** Offset of voxel (i, j, k) in a volume stored i fastest, then j, then k. */
export function voxelOffset(grid: Readonly<CtGrid>, i: number, j: number, k: number): number {
  return i + grid.columns * (j + grid.rows * k);
}

/** Volume of one voxel, millilitres. */
export function voxelVolumeMl(grid: Readonly<CtGrid>): number {
  return (grid.columnSpacingMm * grid.rowSpacingMm * grid.sliceSpacingMm) / 1000;
}

/** x, y and z (LPS, millimetres) of voxel centres along i, j and k: P = S + X·Δi·i + Y·Δj·j + Z·Δk·k. */
export function voxelCentreLps(grid: Readonly<CtGrid>, i: number, j: number, k: number): Vec3 {
  return [
    grid.originLps[0] + grid.columnSpacingMm * i,
    grid.originLps[1] + grid.rowSpacingMm * j,
    grid.originLps[2] + grid.sliceSpacingMm * k,
  ];
}

/** Inclusive index ranges of the voxels whose centres lie in `bounds`; empty when lo > hi. */
export interface IndexRange {
  iLow: number;
  iHigh: number;
  jLow: number;
  jHigh: number;
  kLow: number;
  kHigh: number;
}

export function indexRangeOf(grid: Readonly<CtGrid>, bounds: Readonly<BoundsMm>): IndexRange {
  // A millionth of a voxel of slack keeps a centre lying exactly on a bound inside the range.
  const low = (valueMm: number, originMm: number, spacingMm: number) =>
    Math.max(0, Math.ceil((valueMm - originMm) / spacingMm - 1e-6));
  const high = (valueMm: number, originMm: number, spacingMm: number, count: number) =>
    Math.min(count - 1, Math.floor((valueMm - originMm) / spacingMm + 1e-6));
  const [originX, originY, originZ] = grid.originLps;
  return {
    iLow: low(bounds.min[0], originX, grid.columnSpacingMm),
    iHigh: high(bounds.max[0], originX, grid.columnSpacingMm, grid.columns),
    jLow: low(bounds.min[1], originY, grid.rowSpacingMm),
    jHigh: high(bounds.max[1], originY, grid.rowSpacingMm, grid.rows),
    kLow: low(bounds.min[2], originZ, grid.sliceSpacingMm),
    kHigh: high(bounds.max[2], originZ, grid.sliceSpacingMm, grid.slices),
  };
}

/**
 * The grid as the engine's series geometry (dimensions, spacing, origin, axis directions), for
 * benchmarks that paint the anatomy in memory and hand it to the engine.
 */
export function gridGeometry(grid: Readonly<CtGrid>): {
  dimensions: [number, number, number];
  spacingMm: [number, number, number];
  originLps: [number, number, number];
  direction: [Vec3, Vec3, Vec3];
} {
  return {
    dimensions: [grid.columns, grid.rows, grid.slices],
    spacingMm: [grid.columnSpacingMm, grid.rowSpacingMm, grid.sliceSpacingMm],
    originLps: [grid.originLps[0], grid.originLps[1], grid.originLps[2]],
    direction: [ROW_DIRECTION, COLUMN_DIRECTION, SLICE_DIRECTION],
  };
}
