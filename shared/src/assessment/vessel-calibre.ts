/**
 * Local calibre of a vessel from its own interior distance field, as local thickness
 * (Hildebrand T, Rüegsegger P, J Microsc 1997;185:67 — from memory): the diameter at a voxel is
 * that of the largest ball inside the vessel that holds the voxel. The interior field r gives,
 * at each vessel voxel q, the largest ball about q inside the vessel (radius r(q): every voxel
 * centre nearer than that is vessel); only its local maxima — the centre line, where r is the
 * local radius — need be tried as centres. Balls are painted widest first, so each voxel keeps
 * the widest ball that reaches it; a thin branch keeps its own calibre up to where it meets a
 * trunk, rather than inheriting the trunk's. Crop grid; millimetres.
 *
 * The interior field measures to the nearest voxel centre outside the vessel. For a tube of
 * radius R voxelised by its centres the best-centred voxel of a cross-section reads between
 * R − h and R + h (h: half the voxel diagonal; a centre lies within h of any point, and the
 * voxel nearest the axis lies within h of it), so the diameter 2r is within 2h of 2R.
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
  const diameters = new Float32Array(vesselMask.length).fill(NaN);
  const ridge = ridgeVoxels(vesselMask, insideDistanceMm, dimensions).sort(
    (a, b) => insideDistanceMm[b] - insideDistanceMm[a] || a - b,
  );
  const [nx, ny, nz] = dimensions;
  const [wi, wj, wk] = spacingMm;
  for (const centre of ridge) {
    const radiusMm = insideDistanceMm[centre];
    const ci = centre % nx;
    const cj = Math.floor(centre / nx) % ny;
    const ck = Math.floor(centre / (nx * ny));
    const reach = [radiusMm / wi, radiusMm / wj, radiusMm / wk].map(Math.floor);
    const radiusSquared = radiusMm * radiusMm;
    for (let k = Math.max(0, ck - reach[2]); k <= Math.min(nz - 1, ck + reach[2]); k++) {
      const dz = (k - ck) * wk;
      for (let j = Math.max(0, cj - reach[1]); j <= Math.min(ny - 1, cj + reach[1]); j++) {
        const dy = (j - cj) * wj;
        const partial = dy * dy + dz * dz;
        if (partial >= radiusSquared) continue;
        for (let i = Math.max(0, ci - reach[0]); i <= Math.min(nx - 1, ci + reach[0]); i++) {
          const dx = (i - ci) * wi;
          if (dx * dx + partial >= radiusSquared) continue;
          const index = i + nx * (j + ny * k);
          if (vesselMask[index] !== 0 && Number.isNaN(diameters[index])) {
            diameters[index] = 2 * radiusMm;
          }
        }
      }
    }
  }
  spreadToWall(vesselMask, diameters, dimensions);
  for (let index = 0; index < vesselMask.length; index++) {
    if (vesselMask[index] !== 0 && Number.isNaN(diameters[index])) {
      diameters[index] = 2 * insideDistanceMm[index];
    }
  }
  return diameters;
}

/**
 * The outermost vessel voxels may lie beyond every ridge ball (the ball about a centre stops at
 * its nearest outside centre, while the vessel reaches farther in other directions): each takes
 * the widest diameter among its 26-neighbours already given one, layer by layer inwards from
 * the painted core. A voxel left over (a vessel of isolated voxels) keeps its own ball.
 */
function spreadToWall(
  vesselMask: Uint8Array,
  diameters: Float32Array,
  dimensions: Readonly<GridDimensions>,
): void {
  const [nx, ny, nz] = dimensions;
  let pending: number[] = [];
  for (let index = 0; index < vesselMask.length; index++) {
    if (vesselMask[index] !== 0 && Number.isNaN(diameters[index])) pending.push(index);
  }
  while (pending.length > 0) {
    const found: [number, number][] = [];
    const still: number[] = [];
    for (const index of pending) {
      const i = index % nx;
      const j = Math.floor(index / nx) % ny;
      const k = Math.floor(index / (nx * ny));
      let widest = NaN;
      for (let dk = -1; dk <= 1; dk++) {
        const z = k + dk;
        if (z < 0 || z >= nz) continue;
        for (let dj = -1; dj <= 1; dj++) {
          const y = j + dj;
          if (y < 0 || y >= ny) continue;
          for (let di = -1; di <= 1; di++) {
            const x = i + di;
            if (x < 0 || x >= nx) continue;
            const value = diameters[x + nx * (y + ny * z)];
            if (!Number.isNaN(value) && !(value <= widest)) widest = value;
          }
        }
      }
      if (Number.isNaN(widest)) still.push(index);
      else found.push([index, widest]);
    }
    if (found.length === 0) return;
    for (const [index, value] of found) diameters[index] = value;
    pending = still;
  }
}

/** Vessel voxels whose interior distance no 26-neighbour of the vessel exceeds. */
function ridgeVoxels(
  vesselMask: Uint8Array,
  insideDistanceMm: Float32Array,
  dimensions: Readonly<GridDimensions>,
): number[] {
  const [nx, ny, nz] = dimensions;
  const ridge: number[] = [];
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        if (vesselMask[index] === 0) continue;
        const own = insideDistanceMm[index];
        let isRidge = true;
        for (let dk = -1; dk <= 1 && isRidge; dk++) {
          const z = k + dk;
          if (z < 0 || z >= nz) continue;
          for (let dj = -1; dj <= 1 && isRidge; dj++) {
            const y = j + dj;
            if (y < 0 || y >= ny) continue;
            for (let di = -1; di <= 1; di++) {
              const x = i + di;
              if (x < 0 || x >= nx) continue;
              const neighbour = x + nx * (y + ny * z);
              if (vesselMask[neighbour] !== 0 && insideDistanceMm[neighbour] > own) {
                isRidge = false;
                break;
              }
            }
          }
        }
        if (isRidge) ridge.push(index);
      }
    }
  }
  return ridge;
}
