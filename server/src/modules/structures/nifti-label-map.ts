/**
 * Reads a NIfTI-1 label map (.nii, or .nii.gz) from the layout of nifti1.h: a 348-byte header
 * (either byte order, told by sizeof_hdr), the single-file magic `n+1`, the voxels from
 * vox_offset, i fastest. The world affine (sform, else qform) is RAS; the grid it answers is
 * LPS (`geometryFromNiftiAffine`). Nothing here writes or logs.
 */
import { gunzipSync } from 'node:zlib';
import {
  NiftiOrientationError,
  geometryFromNiftiAffine,
  maxLabelValue,
  niftiSpatialUnitMm,
  niftiWorldAffine,
  type AffineRow,
  type GridDimensions,
  type Vec3,
  type VolumeGeometry,
} from '@emberline/shared';
import { StructureRefusal } from './structure-refusal';

const headerBytes = 348;
const minimumVoxelOffset = 352;

/** nifti1.h DT_* codes Emberline reads as labels, with their byte sizes. */
const dataTypes: Record<number, { name: string; bytes: number }> = {
  2: { name: 'uint8', bytes: 1 },
  4: { name: 'int16', bytes: 2 },
  8: { name: 'int32', bytes: 4 },
  16: { name: 'float32', bytes: 4 },
  64: { name: 'float64', bytes: 8 },
  256: { name: 'int8', bytes: 1 },
  512: { name: 'uint16', bytes: 2 },
  768: { name: 'uint32', bytes: 4 },
};

export interface NiftiLabelMap {
  geometry: VolumeGeometry;
  /** Label values 0…65535, i fastest. */
  labels: Uint16Array;
}

function isGzip(bytes: Uint8Array): boolean {
  return bytes.length >= 2 && bytes[0] === 0x1f && bytes[1] === 0x8b;
}

/** The file, gunzipped when it is gzip, never past `maxInflatedBytes`. */
export function inflateIfGzip(bytes: Uint8Array, maxInflatedBytes: number): Uint8Array {
  if (!isGzip(bytes)) return bytes;
  try {
    return gunzipSync(bytes, { maxOutputLength: maxInflatedBytes });
  } catch (error) {
    if ((error as { code?: unknown }).code === 'ERR_BUFFER_TOO_LARGE') {
      throw new StructureRefusal(
        413,
        'too-large',
        `The label map inflates to more than ${maxInflatedBytes} bytes, more than the series' ` +
          'grid can need.',
      );
    }
    throw new StructureRefusal(400, 'gzip', 'The file is gzip but does not inflate.');
  }
}

function ascii(bytes: Uint8Array, offset: number, length: number): string {
  let text = '';
  for (let index = offset; index < offset + length && bytes[index] !== 0; index++) {
    text += String.fromCharCode(bytes[index]);
  }
  return text;
}

const malformed = (detail: string) => new StructureRefusal(400, 'nifti-malformed', detail);

/** The label map of an uncompressed NIfTI-1 file; throws a StructureRefusal naming the fault. */
export function readNiftiLabelMap(bytes: Uint8Array): NiftiLabelMap {
  if (bytes.length < headerBytes) {
    throw new StructureRefusal(
      415,
      'not-nifti',
      'The file is not a NIfTI-1 label map (.nii or .nii.gz): it is shorter than a header.',
    );
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const sizeOfHeader = (littleEndian: boolean) => view.getInt32(0, littleEndian);
  const littleEndian = sizeOfHeader(true) === headerBytes;
  if (!littleEndian && sizeOfHeader(false) !== headerBytes) {
    const isNifti2 = sizeOfHeader(true) === 540 || sizeOfHeader(false) === 540;
    throw new StructureRefusal(
      415,
      'not-nifti',
      isNifti2
        ? 'The file is NIfTI-2; send the label map as NIfTI-1 (.nii or .nii.gz).'
        : 'The file is not a NIfTI-1 label map (.nii or .nii.gz): sizeof_hdr is not 348.',
    );
  }
  const magic = ascii(bytes, 344, 4);
  if (magic !== 'n+1') {
    throw new StructureRefusal(
      415,
      'not-nifti',
      magic === 'ni1'
        ? 'The file is the header of a two-file NIfTI-1 pair (.hdr/.img); send one .nii file.'
        : 'The file is not a NIfTI-1 label map: its magic is not "n+1".',
    );
  }
  const int16 = (offset: number) => view.getInt16(offset, littleEndian);
  const float32 = (offset: number) => view.getFloat32(offset, littleEndian);

  const dim = Array.from({ length: 8 }, (_, index) => int16(40 + 2 * index));
  const rank = dim[0];
  if (rank < 3 || rank > 7) {
    throw malformed(`dim[0] is ${rank}; a label map has 3 dimensions.`);
  }
  for (let axis = 4; axis <= rank; axis++) {
    if (dim[axis] !== 1) {
      throw malformed(`dim[${axis}] is ${dim[axis]}; a label map has one volume (dim[4…] = 1).`);
    }
  }
  const dimensions: GridDimensions = [dim[1], dim[2], dim[3]];
  if (!dimensions.every((size) => size >= 1)) {
    throw malformed(`The grid size ${dimensions.join(' × ')} is not positive.`);
  }
  const dataTypeCode = int16(70);
  const dataType = dataTypes[dataTypeCode];
  if (!dataType) {
    throw new StructureRefusal(
      415,
      'nifti-datatype',
      `The NIfTI datatype ${dataTypeCode} is not one a label map is read from ` +
        '(uint8, int8, uint16, int16, uint32, int32, float32, float64).',
    );
  }
  const voxelOffset = float32(108);
  if (!Number.isInteger(voxelOffset) || voxelOffset < minimumVoxelOffset) {
    throw malformed(`vox_offset is ${voxelOffset}; NIfTI-1 single files put voxels from 352.`);
  }
  const voxelCount = dimensions[0] * dimensions[1] * dimensions[2];
  const neededBytes = voxelOffset + voxelCount * dataType.bytes;
  if (bytes.length < neededBytes) {
    throw new StructureRefusal(
      400,
      'nifti-truncated',
      `The file holds ${bytes.length} bytes; its header needs ${neededBytes}.`,
    );
  }

  const row = (offset: number): AffineRow => [
    float32(offset),
    float32(offset + 4),
    float32(offset + 8),
    float32(offset + 12),
  ];
  const quaternion: Vec3 = [float32(256), float32(260), float32(264)];
  const offsetRas: Vec3 = [float32(268), float32(272), float32(276)];
  const affine = niftiWorldAffine({
    qformCode: int16(252),
    sformCode: int16(254),
    sformRows: [row(280), row(296), row(312)],
    qform: {
      quaternion,
      offsetRas,
      voxelSize: [float32(80), float32(84), float32(88)],
      qfac: float32(76),
    },
  });
  if (!affine) {
    throw new StructureRefusal(
      400,
      'grid-mismatch',
      'The label map has neither an sform nor a qform (both codes 0), so it is placed nowhere ' +
        'in the patient and cannot be matched with the series.',
    );
  }
  let geometry: VolumeGeometry;
  try {
    geometry = geometryFromNiftiAffine(affine, dimensions, niftiSpatialUnitMm(view.getUint8(123)));
  } catch (error) {
    if (error instanceof NiftiOrientationError) throw malformed(error.message);
    throw error;
  }

  // scl_slope 0 means "no scaling" (nifti1.h); otherwise value = stored · slope + inter.
  const slope = float32(112);
  const intercept = float32(116);
  const isScaled = slope !== 0 && !(slope === 1 && intercept === 0);
  const labels = new Uint16Array(voxelCount);
  const read = voxelReader(view, voxelOffset, dataTypeCode, littleEndian);
  for (let index = 0; index < voxelCount; index++) {
    const stored = read(index);
    const value = isScaled ? stored * slope + intercept : stored;
    if (!Number.isInteger(value) || value < 0 || value > maxLabelValue) {
      throw new StructureRefusal(
        400,
        'label-values',
        `A voxel holds ${value}; label values are whole numbers from 0 (background) to ` +
          `${maxLabelValue}.`,
      );
    }
    labels[index] = value;
  }
  return { geometry, labels };
}

function voxelReader(
  view: DataView,
  voxelOffset: number,
  dataTypeCode: number,
  littleEndian: boolean,
): (index: number) => number {
  switch (dataTypeCode) {
    case 2:
      return (index) => view.getUint8(voxelOffset + index);
    case 256:
      return (index) => view.getInt8(voxelOffset + index);
    case 4:
      return (index) => view.getInt16(voxelOffset + 2 * index, littleEndian);
    case 512:
      return (index) => view.getUint16(voxelOffset + 2 * index, littleEndian);
    case 8:
      return (index) => view.getInt32(voxelOffset + 4 * index, littleEndian);
    case 768:
      return (index) => view.getUint32(voxelOffset + 4 * index, littleEndian);
    case 16:
      return (index) => view.getFloat32(voxelOffset + 4 * index, littleEndian);
    default:
      return (index) => view.getFloat64(voxelOffset + 8 * index, littleEndian);
  }
}
