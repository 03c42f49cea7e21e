/**
 * The voxel grid of an image volume placed in the DICOM patient coordinate system
 * (DICOM PS3.3 C.7.6.2.1.1): LPS, millimetres — +x towards the patient's left, +y posterior,
 * +z towards the head.
 */
import { addScaled, cross, dot, norm, normalize, subtract, type Vec3 } from './vector';

/** Grid size in voxels: [columns, rows, slices] — the extents of i, j and k. */
export type GridDimensions = [number, number, number];

/**
 * A regular voxel grid in patient space.
 *
 * A voxel has indices (i column, j row, k slice), i fastest in memory. Voxel centres sit at
 * integer indices; `originLps` is the centre of voxel (0, 0, 0).
 */
export interface VolumeGeometry {
  /** [columns, rows, slices]. */
  dimensions: GridDimensions;
  /**
   * Centre-to-centre distance along i, j and k, millimetres: [Δi, Δj, Δk]. For DICOM,
   * Δi = PixelSpacing[1] (column spacing), Δj = PixelSpacing[0] (row spacing), Δk the spacing of
   * the sorted slices.
   */
  spacingMm: Vec3;
  /** Centre of voxel (0, 0, 0), LPS, millimetres. */
  originLps: Vec3;
  /**
   * Unit vectors, LPS, along which i, j and k increase: [X, Y, Z]. For DICOM, X is the row
   * direction (first triplet of Image Orientation (Patient)), Y the column direction (second
   * triplet) and Z the slice normal X × Y (right-handed). A NIfTI grid may be left-handed
   * (Z = −X × Y).
   */
  direction: [Vec3, Vec3, Vec3];
}

/**
 * Patient position of a voxel: P = S + X·Δi·i + Y·Δj·j + Z·Δk·k (DICOM PS3.3 C.7.6.2.1.1,
 * extended along the slice axis). Voxel indices (i column, j row, k slice), continuous; the
 * answer is LPS, millimetres.
 */
export function voxelToLps(geometry: VolumeGeometry, voxel: Readonly<Vec3>): Vec3 {
  const [x, y, z] = geometry.direction;
  const [spacingI, spacingJ, spacingK] = geometry.spacingMm;
  let point = addScaled(geometry.originLps, x, spacingI * voxel[0]);
  point = addScaled(point, y, spacingJ * voxel[1]);
  return addScaled(point, z, spacingK * voxel[2]);
}

/**
 * Continuous voxel indices (i column, j row, k slice) of a patient position (LPS,
 * millimetres): the inverse of `voxelToLps`. Integer results are voxel centres; nothing is
 * rounded or clamped to the grid. Works for any invertible direction matrix (by the inverse
 * through cross products), not only orthonormal ones; throws a RangeError for a singular one.
 */
export function lpsToVoxel(geometry: VolumeGeometry, pointLps: Readonly<Vec3>): Vec3 {
  const [x, y, z] = geometry.direction;
  const [spacingI, spacingJ, spacingK] = geometry.spacingMm;
  const axisI: Vec3 = [x[0] * spacingI, x[1] * spacingI, x[2] * spacingI];
  const axisJ: Vec3 = [y[0] * spacingJ, y[1] * spacingJ, y[2] * spacingJ];
  const axisK: Vec3 = [z[0] * spacingK, z[1] * spacingK, z[2] * spacingK];
  const determinant = dot(axisI, cross(axisJ, axisK));
  if (!(Math.abs(determinant) > 0) || !Number.isFinite(determinant)) {
    throw new RangeError('the voxel-to-patient matrix is singular');
  }
  const offset = subtract(pointLps, geometry.originLps);
  return [
    dot(cross(axisJ, axisK), offset) / determinant,
    dot(cross(axisK, axisI), offset) / determinant,
    dot(cross(axisI, axisJ), offset) / determinant,
  ];
}

/** Number of voxels in a grid of the given dimensions. */
export function voxelCount(dimensions: Readonly<GridDimensions>): number {
  return dimensions[0] * dimensions[1] * dimensions[2];
}

/** The geometry attributes of one DICOM image, as parsed (numbers, not strings). */
export interface SliceGeometryAttributes {
  /** Image Position (Patient) (0020,0032): centre of the first voxel, LPS, millimetres. */
  imagePositionPatient: readonly number[];
  /** Image Orientation (Patient) (0020,0037): row direction X then column direction Y, LPS. */
  imageOrientationPatient: readonly number[];
  /** Pixel Spacing (0028,0030): [row spacing Δj, column spacing Δi], millimetres. */
  pixelSpacing: readonly number[];
  /** Rows (0028,0010): number of rows, the extent of j. */
  rows: number;
  /** Columns (0028,0011): number of columns, the extent of i. */
  columns: number;
}

/** A series' grid and the order in which its slices must be stacked. */
export interface SeriesGeometry {
  geometry: VolumeGeometry;
  /** `sliceOrder[k]` is the input index of the slice that becomes slice k. */
  sliceOrder: number[];
}

/** Why a series cannot be stacked into one regular grid. */
export type SeriesGeometryProblem =
  | 'too-few-slices'
  | 'invalid-attribute'
  | 'non-orthonormal-orientation'
  | 'mixed-orientation'
  | 'mixed-size'
  | 'mixed-spacing'
  | 'duplicate-position'
  | 'missing-slice'
  | 'uneven-spacing'
  | 'sheared-stack';

/**
 * A series refused by `geometryFromSlices`. The message is fit to show to the user; in it,
 * "slice n" counts the slices as given, from 1.
 */
export class SeriesGeometryError extends Error {
  override readonly name = 'SeriesGeometryError';

  constructor(
    readonly problem: SeriesGeometryProblem,
    message: string,
    /** Input indices of the slices concerned, when the problem lies with particular slices. */
    readonly sliceIndices: readonly number[] = [],
  ) {
    super(message);
  }
}

/**
 * Largest departure of a direction cosine from orthonormality, and of one slice's cosines from
 * another's (no unit). Image Orientation (Patient) is a decimal string; scanners write at
 * least 6 decimals, whose rounding stays below 1e-6 — 1e-4 (an angle of 0.006°, under 0.03 mm
 * across a 250 mm field) leaves room for that and refuses any real difference.
 */
export const ORIENTATION_TOLERANCE = 1e-4;

/**
 * Largest relative difference between two slices' pixel spacings. Over 512 columns a
 * difference of 1e-4 moves the far edge by a twentieth of a pixel.
 */
export const PIXEL_SPACING_RELATIVE_TOLERANCE = 1e-4;

/**
 * Largest departure of a slice from its place on a regular stack, millimetres: 1 % of the
 * slice spacing, and never below 0.01 mm. The floor absorbs positions written with two
 * decimals (each end rounded by up to 0.005 mm); 1 % keeps the error of treating the stack as
 * regular at a hundredth of a voxel, far below anything a plan is judged on.
 */
export function slicePositionToleranceMm(sliceSpacingMm: number): number {
  return Math.max(0.01, 0.01 * sliceSpacingMm);
}

/**
 * Stacks the slices of a DICOM series into one regular grid (DICOM PS3.3 C.7.6.2.1.1): sorts
 * them along the slice normal X × Y (ascending, so k runs along +Z and the grid is
 * right-handed), takes the first sorted slice's position as the origin and the mean
 * spacing between sorted slices as Δk. Positions, spacings: LPS, millimetres.
 *
 * Throws a SeriesGeometryError, never guessing, for: fewer than 2 slices; a missing, non-finite
 * or non-positive attribute; a non-orthonormal orientation; mixed orientations, sizes or pixel
 * spacings; two slices at one position; a missing slice (a gap of 1.5 spacings or more); uneven
 * spacing; slices offset within their plane (a tilted-gantry stack, not a regular grid). The
 * tolerances are `ORIENTATION_TOLERANCE`, `PIXEL_SPACING_RELATIVE_TOLERANCE` and
 * `slicePositionToleranceMm`.
 */
export function geometryFromSlices(slices: readonly SliceGeometryAttributes[]): SeriesGeometry {
  if (slices.length < 2) {
    throw new SeriesGeometryError(
      'too-few-slices',
      `A volume needs at least 2 slices; the series has ${slices.length}.`,
    );
  }
  slices.forEach(checkAttributes);
  const [rowDirection, columnDirection] = orthonormalOrientation(slices);
  checkSameSizeAndSpacing(slices);
  const normal = cross(rowDirection, columnDirection);

  const sliceOrder = slices.map((_, index) => index);
  const positionsMm = slices.map((slice) => dot(asVec3(slice.imagePositionPatient), normal));
  sliceOrder.sort((a, b) => positionsMm[a] - positionsMm[b]);
  const sortedMm = sliceOrder.map((index) => positionsMm[index]);
  const sliceSpacingMm = checkSpacingAlongNormal(sortedMm, sliceOrder);

  const first = slices[sliceOrder[0]];
  const originLps = asVec3(first.imagePositionPatient);
  checkStackAlongNormal(slices, sliceOrder, originLps, normal, sliceSpacingMm);

  return {
    geometry: {
      dimensions: [first.columns, first.rows, slices.length],
      spacingMm: [first.pixelSpacing[1], first.pixelSpacing[0], sliceSpacingMm],
      originLps,
      direction: [rowDirection, columnDirection, normal],
    },
    sliceOrder,
  };
}

function asVec3(values: readonly number[], offset = 0): Vec3 {
  return [values[offset], values[offset + 1], values[offset + 2]];
}

function formatMm(valueMm: number): string {
  return `${valueMm.toFixed(2)} mm`;
}

function checkAttributes(slice: SliceGeometryAttributes, index: number): void {
  const refuse = (what: string): never => {
    throw new SeriesGeometryError('invalid-attribute', `Slice ${index + 1}: ${what}.`, [index]);
  };
  const allFinite = (values: readonly number[]) => values.every((value) => Number.isFinite(value));
  if (slice.imagePositionPatient.length !== 3 || !allFinite(slice.imagePositionPatient)) {
    refuse('Image Position (Patient) must hold 3 finite numbers');
  }
  if (slice.imageOrientationPatient.length !== 6 || !allFinite(slice.imageOrientationPatient)) {
    refuse('Image Orientation (Patient) must hold 6 finite numbers');
  }
  const isPositive = (value: number) => value > 0 && Number.isFinite(value);
  if (slice.pixelSpacing.length !== 2 || !slice.pixelSpacing.every(isPositive)) {
    refuse('Pixel Spacing must hold 2 positive numbers');
  }
  for (const [name, value] of [
    ['Rows', slice.rows],
    ['Columns', slice.columns],
  ] as const) {
    if (!Number.isInteger(value) || value < 1) refuse(`${name} must be a positive integer`);
  }
}

/** The first slice's X and Y, re-orthonormalised, once every slice agrees with them. */
function orthonormalOrientation(slices: readonly SliceGeometryAttributes[]): [Vec3, Vec3] {
  slices.forEach((slice, index) => {
    const x = asVec3(slice.imageOrientationPatient);
    const y = asVec3(slice.imageOrientationPatient, 3);
    const departure = Math.max(
      Math.abs(dot(x, x) - 1),
      Math.abs(dot(y, y) - 1),
      Math.abs(dot(x, y)),
    );
    if (departure > ORIENTATION_TOLERANCE) {
      throw new SeriesGeometryError(
        'non-orthonormal-orientation',
        `Slice ${index + 1}: Image Orientation (Patient) is not two perpendicular unit vectors ` +
          `(departure ${departure.toExponential(1)}, tolerance ${ORIENTATION_TOLERANCE}).`,
        [index],
      );
    }
  });
  const reference = slices[0].imageOrientationPatient;
  slices.forEach((slice, index) => {
    const difference = Math.max(
      ...slice.imageOrientationPatient.map((value, axis) => Math.abs(value - reference[axis])),
    );
    if (difference > ORIENTATION_TOLERANCE) {
      throw new SeriesGeometryError(
        'mixed-orientation',
        `Slice ${index + 1} is oriented differently from slice 1 ` +
          `(direction cosines differ by up to ${difference.toFixed(4)}): ` +
          'the series mixes orientations.',
        [0, index],
      );
    }
  });
  const x = asVec3(reference);
  const y = asVec3(reference, 3);
  const xUnit = normalize(x);
  return [xUnit, normalize(addScaled(y, xUnit, -dot(y, xUnit)))];
}

function checkSameSizeAndSpacing(slices: readonly SliceGeometryAttributes[]): void {
  const first = slices[0];
  slices.forEach((slice, index) => {
    if (slice.rows !== first.rows || slice.columns !== first.columns) {
      throw new SeriesGeometryError(
        'mixed-size',
        `Slice ${index + 1} has ${slice.rows} × ${slice.columns} pixels (rows × columns), ` +
          `slice 1 has ${first.rows} × ${first.columns}: the series mixes image sizes.`,
        [0, index],
      );
    }
    const isSameSpacing = slice.pixelSpacing.every(
      (value, axis) =>
        Math.abs(value - first.pixelSpacing[axis]) <=
        PIXEL_SPACING_RELATIVE_TOLERANCE * first.pixelSpacing[axis],
    );
    if (!isSameSpacing) {
      throw new SeriesGeometryError(
        'mixed-spacing',
        `Slice ${index + 1} has a pixel spacing of ${slice.pixelSpacing.join(' × ')} mm, ` +
          `slice 1 has ${first.pixelSpacing.join(' × ')} mm: the series mixes pixel spacings.`,
        [0, index],
      );
    }
  });
}

/**
 * Checks the gaps between sorted slice positions (millimetres along the normal) and answers
 * the mean slice spacing. The nominal spacing is the lower median gap, so that one missing
 * slice among many (or among 3) is told apart from a series whose spacing is merely uneven.
 */
function checkSpacingAlongNormal(sortedMm: readonly number[], sliceOrder: number[]): number {
  const gapsMm = sortedMm.slice(1).map((position, gap) => position - sortedMm[gap]);
  const between = (gap: number) =>
    `at ${formatMm(sortedMm[gap])} and ${formatMm(sortedMm[gap + 1])} along the slice normal`;
  const slicesOf = (gap: number) => [sliceOrder[gap], sliceOrder[gap + 1]];
  gapsMm.forEach((gapMm, gap) => {
    if (gapMm <= slicePositionToleranceMm(0)) {
      throw new SeriesGeometryError(
        'duplicate-position',
        `Two slices lie at the same position (${formatMm(sortedMm[gap])} along the slice ` +
          'normal): the series holds duplicates or more than one acquisition.',
        slicesOf(gap),
      );
    }
  });
  const nominalMm = [...gapsMm].sort((a, b) => a - b)[Math.floor((gapsMm.length - 1) / 2)];
  const toleranceMm = slicePositionToleranceMm(nominalMm);
  gapsMm.forEach((gapMm, gap) => {
    if (gapMm >= 1.5 * nominalMm) {
      const missing = Math.round(gapMm / nominalMm) - 1;
      throw new SeriesGeometryError(
        'missing-slice',
        `The slices ${between(gap)} are ${formatMm(gapMm)} apart, about ` +
          `${missing + 1} × the series spacing of ${formatMm(nominalMm)}: ` +
          `${missing === 1 ? '1 slice is' : `${missing} slices are`} missing between them.`,
        slicesOf(gap),
      );
    }
    if (Math.abs(gapMm - nominalMm) > toleranceMm) {
      throw new SeriesGeometryError(
        'uneven-spacing',
        `The slices ${between(gap)} are ${formatMm(gapMm)} apart, while the series spacing ` +
          `is ${formatMm(nominalMm)} (tolerance ${formatMm(toleranceMm)}): the spacing is uneven.`,
        slicesOf(gap),
      );
    }
  });
  return (sortedMm[sortedMm.length - 1] - sortedMm[0]) / gapsMm.length;
}

/** Refuses slices whose positions leave the line origin + t · normal (a tilted gantry). */
function checkStackAlongNormal(
  slices: readonly SliceGeometryAttributes[],
  sliceOrder: readonly number[],
  originLps: Vec3,
  normal: Vec3,
  sliceSpacingMm: number,
): void {
  const toleranceMm = slicePositionToleranceMm(sliceSpacingMm);
  sliceOrder.forEach((index, k) => {
    const offset = subtract(asVec3(slices[index].imagePositionPatient), originLps);
    const inPlane = addScaled(offset, normal, -dot(offset, normal));
    const inPlaneMm = norm(inPlane);
    if (inPlaneMm > toleranceMm) {
      throw new SeriesGeometryError(
        'sheared-stack',
        `Slice ${k + 1} of the sorted stack is shifted ${formatMm(inPlaneMm)} within its plane ` +
          'from the line through the first slice along the normal (a tilted gantry?): ' +
          'the slices do not form a regular grid.',
        [sliceOrder[0], index],
      );
    }
  });
}
