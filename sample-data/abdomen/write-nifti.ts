/**
 * Writes a label map as a gzip-compressed NIfTI-1 file (.nii.gz), from the layout of nifti1.h:
 * a 348-byte little-endian header, 4 bytes of extension flag (none), then the voxels from
 * byte 352, i fastest. Pure: bytes in memory, nothing on disk.
 *
 * NIfTI world coordinates are RAS (+x right, +y anterior, +z superior); the grid is defined in
 * DICOM's LPS, so the sform is the LPS voxel-to-patient matrix with its x and y rows negated,
 * and the qform is the same: a half turn about z (quaternion b = c = 0, d = 1), qfac 1.
 */
import { gzipSync } from 'fflate';
import type { CtGrid } from './grid';

/** NIfTI-1 constants (nifti1.h). */
const NIFTI1_HEADER_BYTES = 348;
const VOXEL_OFFSET_BYTES = 352;
const DT_UINT8 = 2;
const NIFTI_INTENT_LABEL = 1002;
const NIFTI_XFORM_SCANNER_ANAT = 1;
const NIFTI_UNITS_MM = 2;

/** The voxel-to-RAS affine's three rows (srow_x, srow_y, srow_z), millimetres. */
export function voxelToRasRows(grid: Readonly<CtGrid>): [number, number, number, number][] {
  const [x, y, z] = grid.originLps;
  return [
    [-grid.columnSpacingMm, 0, 0, -x],
    [0, -grid.rowSpacingMm, 0, -y],
    [0, 0, grid.sliceSpacingMm, z],
  ];
}

/** The uncompressed .nii bytes of a uint8 label map on the grid. */
export function encodeNiftiLabelMap(
  grid: Readonly<CtGrid>,
  labels: Uint8Array,
  description: string,
): Uint8Array {
  const bytes = new Uint8Array(VOXEL_OFFSET_BYTES + labels.length);
  const header = new DataView(bytes.buffer);
  const littleEndian = true;
  header.setInt32(0, NIFTI1_HEADER_BYTES, littleEndian); // sizeof_hdr
  header.setUint8(38, 'r'.charCodeAt(0)); // regular, unused but traditional
  const dimensions = [3, grid.columns, grid.rows, grid.slices, 1, 1, 1, 1];
  dimensions.forEach((value, index) => header.setInt16(40 + 2 * index, value, littleEndian));
  header.setInt16(68, NIFTI_INTENT_LABEL, littleEndian); // intent_code
  header.setInt16(70, DT_UINT8, littleEndian); // datatype
  header.setInt16(72, 8, littleEndian); // bitpix
  const voxelSizes = [1, grid.columnSpacingMm, grid.rowSpacingMm, grid.sliceSpacingMm, 0, 0, 0, 0];
  voxelSizes.forEach((value, index) => header.setFloat32(76 + 4 * index, value, littleEndian));
  header.setFloat32(108, VOXEL_OFFSET_BYTES, littleEndian); // vox_offset
  header.setFloat32(112, 1, littleEndian); // scl_slope
  header.setFloat32(116, 0, littleEndian); // scl_inter
  header.setUint8(123, NIFTI_UNITS_MM); // xyzt_units
  let largestLabel = 0;
  for (const value of labels) if (value > largestLabel) largestLabel = value;
  header.setFloat32(124, largestLabel, littleEndian); // cal_max
  header.setFloat32(128, 0, littleEndian); // cal_min
  writeAscii(bytes, 148, 80, description); // descrip
  header.setInt16(252, NIFTI_XFORM_SCANNER_ANAT, littleEndian); // qform_code
  header.setInt16(254, NIFTI_XFORM_SCANNER_ANAT, littleEndian); // sform_code
  const rows = voxelToRasRows(grid);
  const quaternion = [0, 0, 1]; // quatern_b, _c, _d: R = diag(−1, −1, 1)
  quaternion.forEach((value, index) => header.setFloat32(256 + 4 * index, value, littleEndian));
  rows.forEach((row, index) => header.setFloat32(268 + 4 * index, row[3], littleEndian)); // qoffset
  rows.forEach((row, rowIndex) =>
    row.forEach((value, column) =>
      header.setFloat32(280 + 16 * rowIndex + 4 * column, value, littleEndian),
    ),
  ); // srow_x, srow_y, srow_z
  writeAscii(bytes, 328, 16, 'labels'); // intent_name
  writeAscii(bytes, 344, 4, 'n+1'); // magic, NUL-terminated
  bytes.set(labels, VOXEL_OFFSET_BYTES);
  return bytes;
}

/** The .nii.gz bytes: gzip with no file name and a zero time stamp, so that runs match. */
export function writeNiftiLabelMapGz(
  grid: Readonly<CtGrid>,
  labels: Uint8Array,
  description: string,
): Uint8Array {
  return gzipSync(encodeNiftiLabelMap(grid, labels, description), { level: 9, mtime: 0 });
}

function writeAscii(bytes: Uint8Array, offset: number, capacity: number, text: string): void {
  if (text.length >= capacity || !/^[\x20-\x7e]*$/.test(text)) {
    throw new RangeError(`"${text}" does not fit ${capacity - 1} ASCII characters`);
  }
  for (let index = 0; index < text.length; index++) {
    bytes[offset + index] = text.charCodeAt(index);
  }
}
