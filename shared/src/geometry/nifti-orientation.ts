/**
 * NIfTI-1 orientation: the header maps voxel indices (i, j, k) to RAS world coordinates
 * (+x right, +y anterior, +z superior) by an sform (srow_x/y/z) or a qform (quaternion, offset,
 * pixdim, qfac), as the comments of nifti1.h describe. Emberline works in DICOM's LPS, which
 * is RAS with x and y negated.
 */
import type { GridDimensions, VolumeGeometry } from './patient-geometry';
import { dot, norm, scale, type Vec3 } from './vector';

/** One row of a 4 × 4 affine. */
export type AffineRow = [number, number, number, number];

/**
 * A 4 × 4 affine, row-major, mapping voxel indices (i, j, k, 1) to world (x, y, z, 1),
 * millimetres once scaled by the header's spatial unit. The last row is [0, 0, 0, 1].
 */
export type AffineMatrix = [AffineRow, AffineRow, AffineRow, AffineRow];

/** A 3 × 3 matrix, row-major. */
export type Matrix3 = [Vec3, Vec3, Vec3];

/** The qform fields of a NIfTI-1 header (method 2 of nifti1.h). */
export interface NiftiQform {
  /** quatern_b, quatern_c, quatern_d: the quaternion's vector part (a is derived). */
  quaternion: Vec3;
  /** qoffset_x, qoffset_y, qoffset_z: world position of voxel (0, 0, 0), RAS. */
  offsetRas: Vec3;
  /** pixdim[1], pixdim[2], pixdim[3]: voxel size along i, j, k, in the header's unit. */
  voxelSize: Vec3;
  /** pixdim[0]: −1 flips the k axis (a left-handed grid); any other value means +1. */
  qfac: number;
}

/** Why a NIfTI orientation cannot become an Emberline grid. */
export type NiftiOrientationProblem = 'not-affine' | 'singular' | 'sheared';

/** A NIfTI orientation refused by `geometryFromNiftiAffine`. */
export class NiftiOrientationError extends Error {
  override readonly name = 'NiftiOrientationError';

  constructor(
    readonly problem: NiftiOrientationProblem,
    message: string,
  ) {
    super(message);
  }
}

/**
 * Largest cosine allowed between two voxel axes of an affine (no unit). Headers store floats
 * (7 significant digits); 1e-4 absorbs their rounding and refuses any real shear, which the
 * distance transforms, working axis by axis, cannot represent.
 */
export const AXIS_ORTHOGONALITY_TOLERANCE = 1e-4;

/**
 * Millimetres in one spatial unit of xyzt_units (nifti1.h: NIFTI_UNITS_METER 1, _MM 2,
 * _MICRON 3, read from the low 3 bits). Unknown (0) is taken as millimetres, common practice.
 */
export function niftiSpatialUnitMm(xyztUnits: number): number {
  switch (xyztUnits & 0x07) {
    case 1:
      return 1000;
    case 3:
      return 0.001;
    default:
      return 1;
  }
}

/**
 * Rotation matrix (row-major, proper) of a qform quaternion (nifti1.h, method 2):
 * a = √(1 − b² − c² − d²), R = [[a²+b²−c²−d², 2(bc−ad), 2(bd+ac)], [2(bc+ad), a²+c²−b²−d²,
 * 2(cd−ab)], [2(bd−ac), 2(cd+ab), a²+d²−c²−b²]]. When b² + c² + d² reaches 1 (to within the
 * floats of a header), (b, c, d) is normalised and a = 0: a half turn.
 */
export function niftiQuaternionToRotation(quaternion: Readonly<Vec3>): Matrix3 {
  let [b, c, d] = quaternion;
  const vectorSquared = b * b + c * c + d * d;
  let a = 1 - vectorSquared;
  if (a < 1e-7) {
    const normalise = 1 / Math.sqrt(vectorSquared);
    b *= normalise;
    c *= normalise;
    d *= normalise;
    a = 0;
  } else {
    a = Math.sqrt(a);
  }
  return [
    [a * a + b * b - c * c - d * d, 2 * (b * c - a * d), 2 * (b * d + a * c)],
    [2 * (b * c + a * d), a * a + c * c - b * b - d * d, 2 * (c * d - a * b)],
    [2 * (b * d - a * c), 2 * (c * d + a * b), a * a + d * d - c * c - b * b],
  ];
}

/**
 * The qform as an affine (RAS, header unit): world = R · [Δi·i, Δj·j, qfac·Δk·k] + offset
 * (nifti1.h, method 2). Voxel sizes of 0 or less are read as 1, as nifti1_io does.
 */
export function qformToAffine(qform: NiftiQform): AffineMatrix {
  const rotation = niftiQuaternionToRotation(qform.quaternion);
  const sizes = qform.voxelSize.map((size) => (size > 0 ? size : 1));
  const columnScale = [sizes[0], sizes[1], qform.qfac < 0 ? -sizes[2] : sizes[2]];
  const row = (axis: number): AffineRow => [
    rotation[axis][0] * columnScale[0],
    rotation[axis][1] * columnScale[1],
    rotation[axis][2] * columnScale[2],
    qform.offsetRas[axis],
  ];
  return [row(0), row(1), row(2), [0, 0, 0, 1]];
}

/** The sform (srow_x, srow_y, srow_z of the header, RAS) as a 4 × 4 affine. */
export function sformToAffine(
  rowX: Readonly<AffineRow>,
  rowY: Readonly<AffineRow>,
  rowZ: Readonly<AffineRow>,
): AffineMatrix {
  return [[...rowX], [...rowY], [...rowZ], [0, 0, 0, 1]];
}

/** The orientation fields of a NIfTI-1 header. */
export interface NiftiOrientationFields {
  /** sform_code: above 0 when srow_x/y/z hold a world affine. */
  sformCode: number;
  /** qform_code: above 0 when the quaternion fields hold a world affine. */
  qformCode: number;
  /** srow_x, srow_y, srow_z. */
  sformRows: [AffineRow, AffineRow, AffineRow];
  qform: NiftiQform;
}

/**
 * The header's affine to RAS (header unit): the sform when sform_code > 0, else the qform
 * when qform_code > 0 (the sform is preferred because registration tools write it; common
 * practice). Null when both codes are 0: nifti1.h's method 1, pixdim alone, places the grid
 * nowhere in the patient, so it must not be aligned with a DICOM series.
 */
export function niftiWorldAffine(fields: NiftiOrientationFields): AffineMatrix | null {
  if (fields.sformCode > 0) return sformToAffine(...fields.sformRows);
  if (fields.qformCode > 0) return qformToAffine(fields.qform);
  return null;
}

/** An affine to RAS turned into one to LPS: the x and y rows negated. */
export function rasToLpsAffine(affineRas: Readonly<AffineMatrix>): AffineMatrix {
  const [x, y, z, last] = affineRas;
  return [[-x[0], -x[1], -x[2], -x[3]], [-y[0], -y[1], -y[2], -y[3]], [...z], [...last]];
}

/**
 * The grid of a NIfTI volume of `dimensions` [dim[1], dim[2], dim[3]] voxels from its affine
 * to RAS; `spatialUnitMm` (see `niftiSpatialUnitMm`) turns the header's unit into
 * millimetres. The answer is LPS, millimetres; its direction may be left-handed. Throws a
 * NiftiOrientationError for a last row other than [0, 0, 0, 1], a zero voxel axis, or axes
 * that are not perpendicular (`AXIS_ORTHOGONALITY_TOLERANCE`).
 */
export function geometryFromNiftiAffine(
  affineRas: Readonly<AffineMatrix>,
  dimensions: Readonly<GridDimensions>,
  spatialUnitMm = 1,
): VolumeGeometry {
  const last = affineRas[3];
  if (last[0] !== 0 || last[1] !== 0 || last[2] !== 0 || last[3] !== 1) {
    throw new NiftiOrientationError(
      'not-affine',
      `The last row of the affine must be [0, 0, 0, 1], got [${last.join(', ')}].`,
    );
  }
  const lps = rasToLpsAffine(affineRas);
  const axisMm = (column: number): Vec3 => [
    lps[0][column] * spatialUnitMm,
    lps[1][column] * spatialUnitMm,
    lps[2][column] * spatialUnitMm,
  ];
  const axes = [axisMm(0), axisMm(1), axisMm(2)];
  const spacingMm: Vec3 = [norm(axes[0]), norm(axes[1]), norm(axes[2])];
  if (!spacingMm.every((spacing) => spacing > 0 && Number.isFinite(spacing))) {
    throw new NiftiOrientationError(
      'singular',
      `A voxel axis of the affine has no length (voxel sizes ${spacingMm.join(', ')} mm).`,
    );
  }
  const [x, y, z] = axes.map((axis, index) => scale(axis, 1 / spacingMm[index]));
  const worstCosine = Math.max(Math.abs(dot(x, y)), Math.abs(dot(y, z)), Math.abs(dot(z, x)));
  if (worstCosine > AXIS_ORTHOGONALITY_TOLERANCE) {
    throw new NiftiOrientationError(
      'sheared',
      `The voxel axes of the affine are not perpendicular (cosine ${worstCosine.toFixed(4)}): ` +
        'a sheared grid is not supported.',
    );
  }
  return {
    dimensions: [dimensions[0], dimensions[1], dimensions[2]],
    spacingMm,
    originLps: [lps[0][3] * spatialUnitMm, lps[1][3] * spatialUnitMm, lps[2][3] * spatialUnitMm],
    direction: [x, y, z],
  };
}
