/**
 * Local calibre of a vessel from its own interior distance field: at each vessel voxel, the
 * distance to the wall at the centre line of its cross-section. From every voxel the field is
 * climbed by steepest ascent (to the 26-neighbour of the vessel with the largest value, while
 * it grows) up to a local maximum — the centre line, where the distance to the wall is the
 * local radius. Crop grid; millimetres.
 *
 * The interior field measures to the nearest voxel centre outside the vessel, which lies up to
 * one spacing beyond the wall: for a tube of radius R voxelised by its centres the ridge reads
 * R to R + ½·diagonal (every ball of radius ½·diagonal holds a centre). The diameter is taken
 * as 2·ridge − the smallest spacing, so it lies within a voxel of 2R either way.
 */
import type { GridDimensions } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';

/**
 * Local diameter (mm) at every voxel of the vessel mask (non-zero), NaN elsewhere.
 * `insideDistanceMm` is the interior field (distance to the nearest non-vessel voxel centre on
 * vessel voxels), on the same grid of `dimensions` and `spacingMm`.
 */
export function vesselDiameters(
  vesselMask: Uint8Array,
  insideDistanceMm: Float32Array,
  dimensions: Readonly<GridDimensions>,
  spacingMm: Readonly<Vec3>,
): Float32Array {
  const [nx, ny, nz] = dimensions;
  const diameters = new Float32Array(vesselMask.length).fill(NaN);
  const members: number[] = [];
  for (let index = 0; index < vesselMask.length; index++) {
    if (vesselMask[index] !== 0) members.push(index);
  }
  // Highest first: the neighbour a voxel climbs to is higher, so its ridge is already known.
  const order = Int32Array.from(members).sort(
    (a, b) => insideDistanceMm[b] - insideDistanceMm[a] || a - b,
  );
  const ridgeMm = new Float32Array(vesselMask.length);
  const smallestSpacing = Math.min(...spacingMm);
  for (const index of order) {
    const i = index % nx;
    const j = Math.floor(index / nx) % ny;
    const k = Math.floor(index / (nx * ny));
    const own = insideDistanceMm[index];
    let best = -1;
    let bestValue = own;
    for (let dk = -1; dk <= 1; dk++) {
      const z = k + dk;
      if (z < 0 || z >= nz) continue;
      for (let dj = -1; dj <= 1; dj++) {
        const y = j + dj;
        if (y < 0 || y >= ny) continue;
        for (let di = -1; di <= 1; di++) {
          const x = i + di;
          if (x < 0 || x >= nx) continue;
          const neighbour = x + nx * (y + ny * z);
          if (vesselMask[neighbour] === 0) continue;
          if (insideDistanceMm[neighbour] > bestValue) {
            bestValue = insideDistanceMm[neighbour];
            best = neighbour;
          }
        }
      }
    }
    ridgeMm[index] = best < 0 ? own : ridgeMm[best];
    diameters[index] = Math.max(0, 2 * ridgeMm[index] - smallestSpacing);
  }
  return diameters;
}
