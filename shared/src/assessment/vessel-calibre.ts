/**
 * Local calibre of a vessel, as local thickness (Hildebrand T, Rüegsegger P, J Microsc
 * 1997;185:67 — from memory): the diameter at a voxel is that of the largest ball inside the
 * vessel that holds the voxel. The interior field r gives, at each vessel voxel q, the largest
 * ball about q inside the vessel (radius r(q): every voxel centre nearer than that is vessel);
 * only its local maxima — the centre line, where r is the local radius — need be tried as
 * centres. Balls are painted widest first, so each voxel keeps the widest ball that reaches
 * it; a thin branch keeps its own calibre up to where it meets a trunk, rather than
 * inheriting the trunk's. Crop grid; millimetres.
 *
 * The interior field measures to the nearest voxel centre outside the vessel: for a tube of
 * radius R voxelised by its centres the best-centred voxel reads between R − h and R + h (h:
 * half the voxel diagonal), so 2r is within 2h of 2R — too coarse near a threshold (at 5 mm
 * slices, ±5 mm). So each centre-line voxel narrower than `refineBelowMm` is read again from
 * its cross-section (vessel-section.ts: the area across the vessel's axis, to a fraction of a
 * voxel, with the band of diameters that could give it), and its ball paints that reading.
 */
import type { GridDimensions } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import { readSection, sectionBand, type SectionReading, type VesselGrid } from './vessel-section';

/** The calibre of one vessel kind on the crop. */
export interface VesselCalibre {
  grid: VesselGrid;
  /** Local diameter (mm) at every vessel voxel, NaN elsewhere. */
  diametersMm: Float32Array;
  /** The centre-line voxel whose reading each vessel voxel took; −1 elsewhere. */
  sourceOf: Int32Array;
  /** Twice the interior distance at a centre-line voxel, mm (the coarse reading). */
  coarseDiameterMm: (centre: number) => number;
  /** Cross-section readings of the centre-line voxels narrower than `refineBelowMm`. */
  sections: Map<number, SectionReading>;
  /** Half a voxel diagonal, mm: the coarse reading is within twice it of the truth. */
  halfDiagonalMm: number;
}

/** The calibre band at a centre-line voxel: its section band, else the coarse ±2h. */
export function calibreBandAt(
  calibre: VesselCalibre,
  centre: number,
): { diameterMm: number; lowerMm: number; upperMm: number } {
  const section = calibre.sections.get(centre);
  if (section) return { diameterMm: section.diameterMm, ...sectionBand(calibre.grid, section) };
  const diameterMm = calibre.coarseDiameterMm(centre);
  return {
    diameterMm,
    lowerMm: Math.max(0, diameterMm - 2 * calibre.halfDiagonalMm),
    upperMm: diameterMm + 2 * calibre.halfDiagonalMm,
  };
}

/**
 * Local diameter (mm) at every vessel voxel of the mask (non-zero), NaN elsewhere.
 * `insideDistanceMm` is the interior field (distance to the nearest non-vessel voxel centre on
 * vessel voxels), on the same grid of `dimensions` and `spacingMm`; centre-line voxels whose
 * coarse diameter is under `refineBelowMm` are read from their cross-section.
 */
export function vesselDiameters(
  vesselMask: Uint8Array,
  insideDistanceMm: Float32Array,
  dimensions: Readonly<GridDimensions>,
  spacingMm: Readonly<Vec3>,
  refineBelowMm = Infinity,
): Float32Array {
  return vesselCalibre(vesselMask, insideDistanceMm, dimensions, spacingMm, refineBelowMm)
    .diametersMm;
}

/** The vessel's local calibre (see the top and `vesselDiameters`). */
export function vesselCalibre(
  vesselMask: Uint8Array,
  insideDistanceMm: Float32Array,
  dimensions: Readonly<GridDimensions>,
  spacingMm: Readonly<Vec3>,
  refineBelowMm = Infinity,
): VesselCalibre {
  const grid: VesselGrid = { mask: vesselMask, dimensions, spacingMm };
  const diameters = new Float32Array(vesselMask.length).fill(NaN);
  const sourceOf = new Int32Array(vesselMask.length).fill(-1);
  // Coarse diameter of the ball that claimed each voxel: a voxel claimed by a ball wider by
  // more than the coarse reading's error (2h on each) belongs to another, wider vessel.
  const claimedMm = new Float32Array(vesselMask.length);
  const sections = new Map<number, SectionReading>();
  const ridge = ridgeVoxels(vesselMask, insideDistanceMm, dimensions).sort(
    (a, b) => insideDistanceMm[b] - insideDistanceMm[a] || a - b,
  );
  const [nx, ny, nz] = dimensions;
  const [wi, wj, wk] = spacingMm;
  const halfDiagonalMm = Math.hypot(wi, wj, wk) / 2;
  for (const centre of ridge) {
    const radiusMm = insideDistanceMm[centre];
    let diameterMm = 2 * radiusMm;
    // The reading this centre's ball paints: its own, or that of a centre of the same vessel
    // whose ball already holds it and whose slab reaches it (a plateau of the centre line
    // reads the same section).
    let source = centre;
    if (diameterMm < refineBelowMm) {
      const owner = sourceOf[centre];
      const ownerSection = owner >= 0 ? sections.get(owner) : undefined;
      if (
        ownerSection &&
        claimedMm[centre] <= diameterMm + 2 * halfDiagonalMm &&
        voxelDistanceMm(owner, centre, dimensions, spacingMm) <= ownerSection.lengthMm / 2
      ) {
        source = owner;
        diameterMm = ownerSection.diameterMm;
      } else {
        const widerMm = diameterMm + 4 * halfDiagonalMm;
        const isWider = (index: number) => claimedMm[index] > widerMm;
        const section = readSection(grid, centre, radiusMm, isWider);
        sections.set(centre, section);
        diameterMm = section.diameterMm;
      }
    }
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
            diameters[index] = diameterMm;
            sourceOf[index] = source;
            claimedMm[index] = 2 * radiusMm;
          }
        }
      }
    }
  }
  spreadToWall(vesselMask, diameters, sourceOf, dimensions);
  for (let index = 0; index < vesselMask.length; index++) {
    if (vesselMask[index] !== 0 && Number.isNaN(diameters[index])) {
      diameters[index] = 2 * insideDistanceMm[index];
      sourceOf[index] = index;
    }
  }
  return {
    grid,
    diametersMm: diameters,
    sourceOf,
    coarseDiameterMm: (centre) => 2 * insideDistanceMm[centre],
    sections,
    halfDiagonalMm,
  };
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
  sourceOf: Int32Array,
  dimensions: Readonly<GridDimensions>,
): void {
  const [nx, ny, nz] = dimensions;
  let pending: number[] = [];
  for (let index = 0; index < vesselMask.length; index++) {
    if (vesselMask[index] !== 0 && Number.isNaN(diameters[index])) pending.push(index);
  }
  while (pending.length > 0) {
    const found: [number, number, number][] = [];
    const still: number[] = [];
    for (const index of pending) {
      const i = index % nx;
      const j = Math.floor(index / nx) % ny;
      const k = Math.floor(index / (nx * ny));
      let widest = NaN;
      let source = -1;
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
            const value = diameters[neighbour];
            if (!Number.isNaN(value) && !(value <= widest)) {
              widest = value;
              source = sourceOf[neighbour];
            }
          }
        }
      }
      if (Number.isNaN(widest)) still.push(index);
      else found.push([index, widest, source]);
    }
    if (found.length === 0) return;
    for (const [index, value, source] of found) {
      diameters[index] = value;
      sourceOf[index] = source;
    }
    pending = still;
  }
}

/** Distance between the centres of two voxels (indices on the grid), mm. */
function voxelDistanceMm(
  a: number,
  b: number,
  dimensions: Readonly<GridDimensions>,
  spacingMm: Readonly<Vec3>,
): number {
  const [nx, ny] = dimensions;
  return Math.hypot(
    ((a % nx) - (b % nx)) * spacingMm[0],
    ((Math.floor(a / nx) % ny) - (Math.floor(b / nx) % ny)) * spacingMm[1],
    (Math.floor(a / (nx * ny)) - Math.floor(b / (nx * ny))) * spacingMm[2],
  );
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
