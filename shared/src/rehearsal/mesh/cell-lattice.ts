/**
 * The lattice of hexahedral cells laid over the organ: blocks of whole voxels, aligned with the
 * grid's index directions, so that the grid's direction cosines carry over to the mesh
 * unchanged. Everything here is in voxel index space (i, j, k): voxel centres at integers, a
 * voxel's box ± 0.5 around its centre, so a cell's faces run along voxel faces.
 */
import type { GridDimensions } from '../../geometry/patient-geometry';
import type { Vec3 } from '../../geometry/vector';
import { cellCornerOffset, KUHN_CELL_TETS } from './kuhn-split';

/** Cells over an organ. Lattice node (a, b, c) has the id a + Na·(b + Nb·c), N = cells + 1. */
export interface CellLattice {
  /** Voxel index of the first voxel of cell (0, 0, 0); may lie outside the grid. */
  start: Vec3;
  /** Voxels along i, j and k in each cell. */
  voxelsPerCell: Vec3;
  /** Cells along i, j and k. */
  cellCounts: Vec3;
}

/** Inclusive voxel bounds of the organ. */
export interface VoxelBounds {
  low: Vec3;
  high: Vec3;
}

/**
 * Voxels per cell along each axis: the whole number of voxels nearest `cellMm`, at least one.
 * `spacingMm` [Δi, Δj, Δk].
 */
export function voxelsPerCell(spacingMm: Readonly<Vec3>, cellMm: number): Vec3 {
  return [0, 1, 2].map((axis) => Math.max(1, Math.round(cellMm / spacingMm[axis]))) as Vec3;
}

/** The box of the voxels for which `isOrgan(index)` holds, or null when there is none. */
export function organBounds(
  dimensions: Readonly<GridDimensions>,
  isOrgan: (voxel: number) => boolean,
): VoxelBounds | null {
  const [nx, ny, nz] = dimensions;
  const low: Vec3 = [nx, ny, nz];
  const high: Vec3 = [-1, -1, -1];
  let voxel = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, voxel++) {
        if (!isOrgan(voxel)) continue;
        if (i < low[0]) low[0] = i;
        if (i > high[0]) high[0] = i;
        if (j < low[1]) low[1] = j;
        if (j > high[1]) high[1] = j;
        if (k < low[2]) low[2] = k;
        if (k > high[2]) high[2] = k;
      }
    }
  }
  return high[0] < 0 ? null : { low, high };
}

/**
 * Cells of `perCell` voxels covering the organ's bounds, centred on them (the voxels left over
 * split evenly at both ends), with one more cell all round so that every lattice node on the
 * lattice's own faces lies outside the organ.
 */
export function layLattice(bounds: VoxelBounds, perCell: Readonly<Vec3>): CellLattice {
  const start: Vec3 = [0, 0, 0];
  const cellCounts: Vec3 = [0, 0, 0];
  for (let axis = 0; axis < 3; axis++) {
    const extent = bounds.high[axis] - bounds.low[axis] + 1;
    const covering = Math.ceil(extent / perCell[axis]);
    const spare = covering * perCell[axis] - extent;
    start[axis] = bounds.low[axis] - Math.floor(spare / 2) - perCell[axis];
    cellCounts[axis] = covering + 2;
  }
  return { start, voxelsPerCell: [...perCell], cellCounts };
}

/** Number of lattice nodes along i, j and k. */
export function latticeNodeCounts(lattice: CellLattice): Vec3 {
  return [lattice.cellCounts[0] + 1, lattice.cellCounts[1] + 1, lattice.cellCounts[2] + 1];
}

/** Position of a lattice node in voxel index space (a cell's low faces lie half a voxel
 * before its first voxel's centre). */
export function latticeNodePosition(lattice: CellLattice, node: number): Vec3 {
  const [na, nb] = latticeNodeCounts(lattice);
  const a = node % na;
  const b = Math.floor(node / na) % nb;
  const c = Math.floor(node / (na * nb));
  return [
    lattice.start[0] - 0.5 + lattice.voxelsPerCell[0] * a,
    lattice.start[1] - 0.5 + lattice.voxelsPerCell[1] * b,
    lattice.start[2] - 0.5 + lattice.voxelsPerCell[2] * c,
  ];
}

/**
 * Calls `visit(cornerNodes)` for each of the 6 Kuhn tets (kuhn-split.ts) of cell (ci, cj, ck),
 * with the lattice ids of its 4 corners, positively oriented in index space.
 */
export function forEachCellTet(
  lattice: CellLattice,
  ci: number,
  cj: number,
  ck: number,
  visit: (tet: readonly [number, number, number, number]) => void,
): void {
  const [na, nb] = latticeNodeCounts(lattice);
  const corners: number[] = [];
  for (let corner = 0; corner < 8; corner++) {
    const [di, dj, dk] = cellCornerOffset(corner);
    corners.push(ci + di + na * (cj + dj + nb * (ck + dk)));
  }
  for (const tet of KUHN_CELL_TETS) {
    visit([corners[tet[0]], corners[tet[1]], corners[tet[2]], corners[tet[3]]]);
  }
}

/**
 * The Kuhn tets of every cell of a lattice for which `isKept(ci, cj, ck)` holds, over the
 * lattice nodes they use (renumbered in ascending order of lattice id): positions in voxel index
 * space, 3 per node, and 4 node indices per tet, positively oriented in index space.
 */
export function latticeTets(
  lattice: CellLattice,
  isKept: (ci: number, cj: number, ck: number) => boolean = () => true,
): { nodes: Float64Array; tets: Uint32Array } {
  const [ci, cj, ck] = lattice.cellCounts;
  const latticeIds: number[] = [];
  for (let k = 0; k < ck; k++) {
    for (let j = 0; j < cj; j++) {
      for (let i = 0; i < ci; i++) {
        if (isKept(i, j, k)) forEachCellTet(lattice, i, j, k, (tet) => latticeIds.push(...tet));
      }
    }
  }
  const used = [...new Set(latticeIds)].sort((a, b) => a - b);
  const compact = new Map(used.map((id, index) => [id, index]));
  const nodes = new Float64Array(3 * used.length);
  used.forEach((id, index) => nodes.set(latticeNodePosition(lattice, id), 3 * index));
  return { nodes, tets: Uint32Array.from(latticeIds, (id) => compact.get(id) as number) };
}
