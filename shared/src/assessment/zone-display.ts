/**
 * A zone for drawing: its mask cut down to the tight box of its voxels, with that box's grid
 * (series spacing and axes, LPS, millimetres).
 */
import type { ZoneModel } from '../api/assessments';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { boxGeometry, type VoxelBox } from '../geometry/voxel-box';
import { maskExtent } from './zone-field';

export interface ZoneDisplay {
  model: ZoneModel;
  /** The box's grid: series spacing and axes, LPS, millimetres. */
  geometry: VolumeGeometry;
  /** 1 inside the zone (i fastest on `geometry`). */
  mask: Uint8Array;
  volumeMl: number;
}

/** The zone of a crop mask on its tight box; an empty zone gets one empty voxel. */
export function zoneDisplay(
  model: ZoneModel,
  mask: Uint8Array,
  cropGeometry: VolumeGeometry,
  volumeMl: number,
): ZoneDisplay {
  const extent = maskExtent(mask, cropGeometry.dimensions);
  if (extent === null) {
    return {
      model,
      geometry: boxGeometry(cropGeometry, { start: [0, 0, 0], size: [1, 1, 1] }),
      mask: new Uint8Array(1),
      volumeMl,
    };
  }
  const box: VoxelBox = {
    start: extent.min.map((value) => value) as [number, number, number],
    size: extent.min.map((value, axis) => extent.max[axis] - value + 1) as [number, number, number],
  };
  const [nx, ny] = cropGeometry.dimensions;
  const [bx, by, bz] = box.size;
  const tight = new Uint8Array(bx * by * bz);
  for (let z = 0; z < bz; z++) {
    for (let y = 0; y < by; y++) {
      const from = box.start[0] + nx * (box.start[1] + y + ny * (box.start[2] + z));
      tight.set(mask.subarray(from, from + bx), bx * (y + by * z));
    }
  }
  return { model, geometry: boxGeometry(cropGeometry, box), mask: tight, volumeMl };
}
