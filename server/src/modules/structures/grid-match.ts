import { voxelToLps, vector3, type Vec3, type VolumeGeometry } from '@emberline/shared';
import { StructureRefusal } from './structure-refusal';

/**
 * How far (millimetres, LPS) a voxel centre of a label map may lie from the centre of the
 * series voxel with the same indices. Far below any voxel (the finest CT is ~0.3 mm), far above
 * the rounding of the 32-bit floats a NIfTI header stores coordinates in (~1e-5 mm at 200 mm).
 */
export const GRID_MATCH_TOLERANCE_MM = 0.05;

const format = (point: Readonly<Vec3>) => `(${point.map((value) => value.toFixed(2)).join(', ')})`;

/**
 * Refuses (400) a label map whose grid is not the series' own: other dimensions, or a voxel
 * centre more than GRID_MATCH_TOLERANCE_MM away from the series' at any of the eight corners
 * (both maps are affine, so the corners bound every voxel). Nothing is resampled: a label map
 * drawn on another grid must be brought onto the series' grid by the tool that drew it.
 */
export function assertSameGrid(labelMap: VolumeGeometry, series: VolumeGeometry): void {
  const [nx, ny, nz] = series.dimensions;
  if (labelMap.dimensions.some((size, axis) => size !== series.dimensions[axis])) {
    throw new StructureRefusal(
      400,
      'grid-mismatch',
      `The label map is ${labelMap.dimensions.join(' × ')} voxels; the series is ` +
        `${nx} × ${ny} × ${nz}. Import a label map drawn on this series (it is not resampled).`,
    );
  }
  for (const i of [0, nx - 1]) {
    for (const j of [0, ny - 1]) {
      for (const k of [0, nz - 1]) {
        const expected = voxelToLps(series, [i, j, k]);
        const found = voxelToLps(labelMap, [i, j, k]);
        const offsetMm = vector3.distance(expected, found);
        if (offsetMm > GRID_MATCH_TOLERANCE_MM) {
          throw new StructureRefusal(
            400,
            'grid-mismatch',
            `The label map's voxel (${i}, ${j}, ${k}) lies at LPS ${format(found)} mm (its ` +
              `RAS affine turned to LPS); the series' lies at ${format(expected)} mm, ` +
              `${offsetMm.toFixed(2)} mm away (at most ${GRID_MATCH_TOLERANCE_MM} mm allowed). ` +
              'Import a label map drawn on this series (it is not resampled).',
          );
        }
      }
    }
  }
}
