/**
 * A vessel's calibre read from its cross-section, to better than a voxel: at a centre-line
 * voxel c, the vessel's axis t is the principal axis of the vessel voxels around it
 * (geometry/principal-axis.ts), and the area across the axis is the vessel volume in a slab of
 * length L along t, divided by L — each voxel counted by the share of its extent along t
 * (Σ|tₐ|·wₐ) that lies within the slab, so that a slab cutting a voxel counts a fraction of it.
 * The diameter is that of the circle of the same area, 2√(A/π). Counting voxel centres keeps
 * the volume on average, so on a vessel oblique to the grid the slab averages the steps of
 * the staircase away; across a vessel parallel to a grid axis each section repeats the same
 * pixels and the reading keeps their quantisation.
 *
 * How far off can the reading be? The band: the diameters of a straight round vessel along t
 * whose voxelisation on this grid, with its axis anywhere across the cell of c (36 placements),
 * would give the same reading by the same count. For each offset the reading grows with the
 * diameter in steps (each voxel centre joins when the radius reaches its distance from the
 * axis), so the band's ends are read off the sorted distances directly. Where the label map
 * cannot tell the calibre — a thin vessel lying within one thick slice — the band is wide and
 * the verdict says so. Crop grid; millimetres.
 */
import type { GridDimensions } from '../geometry/patient-geometry';
import { principalAxis } from '../geometry/principal-axis';
import type { Vec3 } from '../geometry/vector';

/** A cross-section reading at one centre-line voxel. */
export interface SectionReading {
  /** The centre-line voxel (crop index). */
  centre: number;
  /** The voxels the reading left out. */
  isExcluded: ExcludedVoxels;
  /** The axis, a unit vector in the grid's axes (i, j, k). */
  axis: Vec3;
  /** Slab length along the axis, and the lateral reach of the count, mm. */
  lengthMm: number;
  reachMm: number;
  /** Voxels counted (weighted by their share in the slab). */
  weight: number;
  /** Area across the axis, mm², and the diameter of a circle of that area, mm. */
  areaMm2: number;
  diameterMm: number;
}

/** Where the reading looks: the vessel mask on its grid. */
export interface VesselGrid {
  mask: Uint8Array;
  dimensions: Readonly<GridDimensions>;
  spacingMm: Readonly<Vec3>;
}

/**
 * Voxels a reading leaves out, as neither vessel nor background: those of a clearly wider
 * vessel (a trunk beside the branch being read), so that it neither tilts the branch's axis
 * nor adds to its section.
 */
export type ExcludedVoxels = (index: number) => boolean;

const NONE_EXCLUDED: ExcludedVoxels = () => false;

/**
 * Placements of the axis tried for the band: a 6 × 6 grid over the rectangle that holds the
 * centre voxel's cell seen along the axis (offsets along the axis change nothing).
 */
const PLACEMENTS = [-5 / 12, -3 / 12, -1 / 12, 1 / 12, 3 / 12, 5 / 12];

/**
 * The cross-section reading at centre-line voxel `centre`, whose distance to the nearest
 * voxel centre outside the vessel is `insideMm`.
 */
export function readSection(
  grid: VesselGrid,
  centre: number,
  insideMm: number,
  isExcluded: ExcludedVoxels = NONE_EXCLUDED,
): SectionReading {
  const { spacingMm } = grid;
  const halfDiagonalMm = Math.hypot(spacingMm[0], spacingMm[1], spacingMm[2]) / 2;
  const largestMm = Math.max(...spacingMm);
  // The true radius lies within a half diagonal of insideMm (vessel-calibre.ts); the count
  // reaches past it by one more and a voxel, so that the whole section is seen.
  const radiusMm = insideMm + halfDiagonalMm;
  const axis = localAxis(grid, centre, Math.max(2.5 * radiusMm, 2 * largestMm), isExcluded);
  const extentAlongMm = extentAlong(axis, spacingMm);
  const lengthMm = Math.max(2 * extentAlongMm, 2 * radiusMm);
  const reachMm = radiusMm + halfDiagonalMm + largestMm;
  let weight = 0;
  forEachInSlab(grid, centre, axis, lengthMm, reachMm, isExcluded, (index, share) => {
    if (index >= 0 && grid.mask[index] !== 0) weight += share;
  });
  // Where the grid (the crop) cuts the slab, the vessel is counted over the part of the axis
  // within it.
  const voxelMm3 = spacingMm[0] * spacingMm[1] * spacingMm[2];
  const withinMm = axisWithinGrid(grid, centre, axis, lengthMm);
  const areaMm2 = withinMm > 0 ? (weight * voxelMm3) / withinMm : 0;
  return {
    centre,
    isExcluded,
    axis,
    lengthMm,
    reachMm,
    weight,
    areaMm2,
    diameterMm: 2 * Math.sqrt(areaMm2 / Math.PI),
  };
}

/**
 * The calibre band of a reading: the smallest and largest diameters of a straight round vessel
 * along the reading's axis that give the same count for some position of its axis within the
 * centre voxel's cell, mm. The upper end stops at twice the count's reach.
 */
export function sectionBand(
  grid: VesselGrid,
  reading: SectionReading,
): { lowerMm: number; upperMm: number } {
  const { spacingMm } = grid;
  const [nx, ny] = grid.dimensions;
  const { axis, centre } = reading;
  const ci = centre % nx;
  const cj = Math.floor(centre / nx) % ny;
  const ck = Math.floor(centre / (nx * ny));
  const offsets: Vec3[] = [];
  const shares: number[] = [];
  const { lengthMm, reachMm, isExcluded } = reading;
  forEachInSlab(grid, centre, axis, lengthMm, reachMm, isExcluded, (index, share) => {
    if (index < 0) return;
    const i = index % nx;
    const j = Math.floor(index / nx) % ny;
    const k = Math.floor(index / (nx * ny));
    offsets.push([(i - ci) * spacingMm[0], (j - cj) * spacingMm[1], (k - ck) * spacingMm[2]]);
    shares.push(share);
  });
  const tolerance = 1e-9 * Math.max(1, reading.weight);
  const count = shares.length;
  const distancesMm = new Float64Array(count);
  // Sort keys: the distance in micrometres (well within exact integers) times 2¹⁶ plus the
  // voxel's slot, so that a plain numeric sort orders the slots by distance.
  const keys = new Float64Array(count);
  const slots = 2 ** 16;
  if (count >= slots) throw new RangeError(`a section of ${count} voxels is too large to read`);
  let lowerMm = Infinity;
  let upperMm = 0;
  // Two unit vectors across the axis, and the cell's half extent along each.
  const across = perpendicularPair(axis);
  const halfExtent = across.map(
    (unit) =>
      (Math.abs(unit[0]) * spacingMm[0] +
        Math.abs(unit[1]) * spacingMm[1] +
        Math.abs(unit[2]) * spacingMm[2]) /
      2,
  );
  for (const fp of PLACEMENTS) {
    for (const fq of PLACEMENTS) {
      const shift = [0, 1, 2].map(
        (index) =>
          2 * fp * halfExtent[0] * across[0][index] + 2 * fq * halfExtent[1] * across[1][index],
      );
      const [sx, sy, sz] = shift;
      // Distance of each counted centre from the shifted axis, nearest first.
      for (let n = 0; n < count; n++) {
        const [ox, oy, oz] = offsets[n];
        const px = ox - sx;
        const py = oy - sy;
        const pz = oz - sz;
        const along = px * axis[0] + py * axis[1] + pz * axis[2];
        distancesMm[n] = Math.sqrt(Math.max(0, px * px + py * py + pz * pz - along * along));
        keys[n] = Math.round(distancesMm[n] * 1e3) * slots + n;
      }
      keys.sort();
      const order = (n: number) => keys[n] % slots;
      // Radii at which this placement's count first reaches the reading, and first exceeds it.
      let cumulative = 0;
      let reachesAt = Infinity;
      let exceedsAt = Infinity;
      for (let n = 0; n < count; n++) {
        const here = Math.floor(keys[n] / slots) / 1e3;
        cumulative += shares[order(n)];
        const isLastOfTie = n + 1 === count || Math.floor(keys[n + 1] / slots) / 1e3 > here;
        if (!isLastOfTie) continue;
        if (reachesAt === Infinity && cumulative >= reading.weight - tolerance) reachesAt = here;
        if (cumulative > reading.weight + tolerance) {
          exceedsAt = here;
          break;
        }
      }
      lowerMm = Math.min(lowerMm, 2 * reachesAt);
      upperMm = Math.max(upperMm, 2 * Math.min(exceedsAt, reading.reachMm));
    }
  }
  const nominal = reading.diameterMm;
  return {
    lowerMm: Math.min(nominal, Number.isFinite(lowerMm) ? lowerMm : 0),
    upperMm: Math.max(nominal, upperMm),
  };
}

/**
 * Length (mm) of the part of the axis through the centre voxel, within `lengthMm / 2` of it,
 * that lies on the grid's cells.
 */
function axisWithinGrid(
  grid: VesselGrid,
  centre: number,
  axis: Readonly<Vec3>,
  lengthMm: number,
): number {
  const [nx, ny] = grid.dimensions;
  const position = [centre % nx, Math.floor(centre / nx) % ny, Math.floor(centre / (nx * ny))];
  let from = -lengthMm / 2;
  let to = lengthMm / 2;
  for (let a = 0; a < 3; a++) {
    const w = grid.spacingMm[a];
    const low = (-0.5 - position[a]) * w;
    const high = (grid.dimensions[a] - 0.5 - position[a]) * w;
    if (axis[a] === 0) continue;
    const first = low / axis[a];
    const second = high / axis[a];
    from = Math.max(from, Math.min(first, second));
    to = Math.min(to, Math.max(first, second));
  }
  return Math.max(0, to - from);
}

/** Two unit vectors perpendicular to the unit `axis` and to each other. */
function perpendicularPair(axis: Readonly<Vec3>): [Vec3, Vec3] {
  const helper: Vec3 = Math.abs(axis[0]) < 0.9 ? [1, 0, 0] : [0, 1, 0];
  const along = helper[0] * axis[0] + helper[1] * axis[1] + helper[2] * axis[2];
  const p: Vec3 = [
    helper[0] - along * axis[0],
    helper[1] - along * axis[1],
    helper[2] - along * axis[2],
  ];
  const length = Math.hypot(p[0], p[1], p[2]);
  const first: Vec3 = [p[0] / length, p[1] / length, p[2] / length];
  const second: Vec3 = [
    axis[1] * first[2] - axis[2] * first[1],
    axis[2] * first[0] - axis[0] * first[2],
    axis[0] * first[1] - axis[1] * first[0],
  ];
  return [first, second];
}

/** Σ |tₐ|·wₐ: how far a voxel reaches along the unit t (grid axes), mm. */
function extentAlong(axis: Readonly<Vec3>, spacingMm: Readonly<Vec3>): number {
  return (
    Math.abs(axis[0]) * spacingMm[0] +
    Math.abs(axis[1]) * spacingMm[1] +
    Math.abs(axis[2]) * spacingMm[2]
  );
}

/**
 * Calls `visit(index, share)` for each lattice point whose centre lies within `reachMm` of
 * the line through the centre voxel along `axis` and whose extent along it overlaps the slab
 * of `lengthMm` about the centre; `share` is the part of that extent inside the slab, `index`
 * the voxel, or −1 for a point beyond the grid. Excluded voxels are skipped.
 */
function forEachInSlab(
  grid: VesselGrid,
  centre: number,
  axis: Readonly<Vec3>,
  lengthMm: number,
  reachMm: number,
  isExcluded: ExcludedVoxels,
  visit: (index: number, share: number) => void,
): void {
  const { dimensions, spacingMm } = grid;
  const [nx, ny, nz] = dimensions;
  const ci = centre % nx;
  const cj = Math.floor(centre / nx) % ny;
  const ck = Math.floor(centre / (nx * ny));
  const extentMm = extentAlong(axis, spacingMm);
  const halfMm = lengthMm / 2;
  const boundMm = Math.hypot(halfMm + extentMm / 2, reachMm);
  const span = spacingMm.map((w) => Math.ceil(boundMm / w));
  const reachSquared = reachMm * reachMm;
  for (let k = ck - span[2]; k <= ck + span[2]; k++) {
    const z = (k - ck) * spacingMm[2];
    for (let j = cj - span[1]; j <= cj + span[1]; j++) {
      const y = (j - cj) * spacingMm[1];
      for (let i = ci - span[0]; i <= ci + span[0]; i++) {
        const x = (i - ci) * spacingMm[0];
        const along = x * axis[0] + y * axis[1] + z * axis[2];
        const overlap =
          Math.min(halfMm, along + extentMm / 2) - Math.max(-halfMm, along - extentMm / 2);
        if (overlap <= 0) continue;
        if (x * x + y * y + z * z - along * along > reachSquared) continue;
        const share = Math.min(1, overlap / extentMm);
        if (i < 0 || j < 0 || k < 0 || i >= nx || j >= ny || k >= nz) {
          visit(-1, share);
          continue;
        }
        const index = i + nx * (j + ny * k);
        if (isExcluded(index)) continue;
        visit(index, share);
      }
    }
  }
}

/** Principal axis (grid axes) of the vessel voxels within `radiusMm` of the centre voxel. */
function localAxis(
  grid: VesselGrid,
  centre: number,
  radiusMm: number,
  isExcluded: ExcludedVoxels,
): Vec3 {
  const { mask, dimensions, spacingMm } = grid;
  const [nx, ny, nz] = dimensions;
  const ci = centre % nx;
  const cj = Math.floor(centre / nx) % ny;
  const ck = Math.floor(centre / (nx * ny));
  const span = spacingMm.map((w) => Math.floor(radiusMm / w));
  const radiusSquared = radiusMm * radiusMm;
  let count = 0;
  const sum = [0, 0, 0];
  const products = [0, 0, 0, 0, 0, 0];
  for (let k = Math.max(0, ck - span[2]); k <= Math.min(nz - 1, ck + span[2]); k++) {
    const z = (k - ck) * spacingMm[2];
    for (let j = Math.max(0, cj - span[1]); j <= Math.min(ny - 1, cj + span[1]); j++) {
      const y = (j - cj) * spacingMm[1];
      for (let i = Math.max(0, ci - span[0]); i <= Math.min(nx - 1, ci + span[0]); i++) {
        const x = (i - ci) * spacingMm[0];
        if (x * x + y * y + z * z > radiusSquared) continue;
        const index = i + nx * (j + ny * k);
        if (mask[index] === 0 || isExcluded(index)) continue;
        count++;
        sum[0] += x;
        sum[1] += y;
        sum[2] += z;
        products[0] += x * x;
        products[1] += y * y;
        products[2] += z * z;
        products[3] += x * y;
        products[4] += x * z;
        products[5] += y * z;
      }
    }
  }
  if (count < 2) return [0, 0, 1];
  const [mx, my, mz] = sum.map((value) => value / count);
  return principalAxis(
    products[0] / count - mx * mx,
    products[1] / count - my * my,
    products[2] / count - mz * mz,
    products[3] / count - mx * my,
    products[4] / count - mx * mz,
    products[5] / count - my * mz,
  ).axis;
}
