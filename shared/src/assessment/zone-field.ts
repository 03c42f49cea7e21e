/**
 * The signed distance of an ablation zone (a mask on the crop) over the part of the crop where
 * margins and heat sinks are measured, and the readings taken from it.
 *
 * The signed transform (geometry/distance-transform.ts) measures between voxel centres: inside
 * the zone, −(distance to the nearest centre outside it); outside, +(distance to the nearest
 * centre inside). The zone's voxelised surface is the set of faces between its cells and the
 * cells outside, so from a voxel centre to that surface, along the line to the nearest centre
 * of the other side, is that distance less the reach of the other voxel's cell along the line,
 * Σ|uₐ|·wₐ/2 (a box of sides wₐ reaches that far along a unit u from its centre). The direction
 * u is read from the field's gradient (a distance field grows away from its nearest feature);
 * where the gradient vanishes (on a ridge) the largest reach, half the voxel diagonal, is taken.
 *
 * Accuracy: the zone's voxelised surface lies within half a voxel diagonal h of the model's,
 * so a margin read here at a tumour's face (zone-surface.ts `maskZoneSurface`) is within h of
 * the margin to the model's zone, plus the linear reading's error on a curved surface, and
 * within h plus half a spacing of the analytic margin (checked in coverage.spec.ts against
 * analytic spheres). The table zone is not read here: its spheroids are read exactly.
 */
import { signedDistanceTransform } from '../geometry/distance-transform';
import type { GridDimensions, VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import type { VoxelBox } from '../geometry/voxel-box';
import type { VoxelExtent } from './voxel-extent';

export interface ZoneField {
  /** The part of the crop covered, in crop voxel indices. */
  box: VoxelBox;
  /** Signed distance on the box (i fastest), mm; negative inside the zone. */
  signedMm: Float32Array;
  spacingMm: Vec3;
}

/** Bounding box of the non-zero voxels of a mask (crop voxel indices), or null when empty. */
export function maskExtent(
  mask: Uint8Array,
  dimensions: Readonly<GridDimensions>,
): VoxelExtent | null {
  const [nx, ny, nz] = dimensions;
  const min: Vec3 = [Infinity, Infinity, Infinity];
  const max: Vec3 = [-Infinity, -Infinity, -Infinity];
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        if (mask[index] === 0) continue;
        if (i < min[0]) min[0] = i;
        if (i > max[0]) max[0] = i;
        if (j < min[1]) min[1] = j;
        if (j > max[1]) max[1] = j;
        if (k < min[2]) min[2] = k;
        if (k > max[2]) max[2] = k;
      }
    }
  }
  return min[0] === Infinity ? null : { min, max };
}

/**
 * The zone's signed distance over the box holding the given extents (crop voxel indices: the
 * zone's own and those of the tumours to measure) padded by `paddingMm` and one voxel, within
 * the crop. Values inside the zone are exact wherever the zone does not reach the box's faces
 * (a straight line to the padded face always leaves the zone); values outside are exact
 * because the whole zone lies in the box.
 */
export function zoneSignedField(
  zoneMask: Uint8Array,
  cropGeometry: VolumeGeometry,
  extents: readonly VoxelExtent[],
  paddingMm: number,
): ZoneField {
  const { dimensions, spacingMm } = cropGeometry;
  const start: [number, number, number] = [0, 0, 0];
  const size: [number, number, number] = [0, 0, 0];
  for (let axis = 0; axis < 3; axis++) {
    const pad = Math.ceil(paddingMm / spacingMm[axis]) + 1;
    const low = Math.min(...extents.map((extent) => extent.min[axis]));
    const high = Math.max(...extents.map((extent) => extent.max[axis]));
    start[axis] = Math.max(0, Math.floor(low) - pad);
    size[axis] = Math.min(dimensions[axis] - 1, Math.ceil(high) + pad) - start[axis] + 1;
  }
  const box: VoxelBox = { start, size };
  return {
    box,
    signedMm: signedDistanceTransform(zoneMask, dimensions, spacingMm, { box }),
    spacingMm: [spacingMm[0], spacingMm[1], spacingMm[2]],
  };
}

/** Index in the field's box of a crop voxel, or −1 outside the box. */
export function fieldIndex(field: ZoneField, i: number, j: number, k: number): number {
  const [x0, y0, z0] = field.box.start;
  const [bx, by, bz] = field.box.size;
  const x = i - x0;
  const y = j - y0;
  const z = k - z0;
  if (x < 0 || y < 0 || z < 0 || x >= bx || y >= by || z >= bz) return -1;
  return x + bx * (y + by * z);
}

/**
 * Local ablative margin at a crop voxel's centre (mm): the distance from it to the zone's
 * voxelised surface (see the top), positive inside the zone and negative outside it (how far
 * the point lies outside). −Infinity for an empty zone.
 */
export function marginAt(field: ZoneField, i: number, j: number, k: number): number {
  const index = fieldIndex(field, i, j, k);
  if (index < 0) throw new RangeError(`voxel (${i}, ${j}, ${k}) lies outside the zone field`);
  const signed = field.signedMm[index];
  if (!Number.isFinite(signed)) return -signed;
  const toSurfaceMm = Math.abs(signed) - cellReachMm(field, index);
  return signed > 0 ? -toSurfaceMm : toSurfaceMm;
}

/** Σ|uₐ|·wₐ/2 for the direction u of the field's gradient at a box voxel (see the top). */
function cellReachMm(field: ZoneField, index: number): number {
  const [wi, wj, wk] = field.spacingMm;
  const unit = unitGradient(field, index);
  if (unit === null) return Math.hypot(wi, wj, wk) / 2;
  return (Math.abs(unit[0]) * wi + Math.abs(unit[1]) * wj + Math.abs(unit[2]) * wk) / 2;
}

/**
 * Unit direction (grid axes i, j, k) in which the signed field grows at a box voxel, from
 * central differences (one-sided at the box's faces or beside an infinite value); null where
 * it vanishes (a ridge) or cannot be read.
 */
export function unitGradient(field: ZoneField, index: number): Vec3 | null {
  const [bx, by, bz] = field.box.size;
  const strides = [1, bx, bx * by];
  const position = [index % bx, Math.floor(index / bx) % by, Math.floor(index / (bx * by))];
  const extents = [bx, by, bz];
  const gradient: Vec3 = [0, 0, 0];
  for (let axis = 0; axis < 3; axis++) {
    const stride = strides[axis];
    const hasLow = position[axis] > 0 && Number.isFinite(field.signedMm[index - stride]);
    const hasHigh =
      position[axis] < extents[axis] - 1 && Number.isFinite(field.signedMm[index + stride]);
    const low = hasLow ? field.signedMm[index - stride] : field.signedMm[index];
    const high = hasHigh ? field.signedMm[index + stride] : field.signedMm[index];
    const steps = Number(hasLow) + Number(hasHigh);
    gradient[axis] = steps === 0 ? 0 : (high - low) / (steps * field.spacingMm[axis]);
  }
  const length = Math.hypot(gradient[0], gradient[1], gradient[2]);
  if (!(length > 1e-6) || !Number.isFinite(length)) return null;
  return [gradient[0] / length, gradient[1] / length, gradient[2] / length];
}
