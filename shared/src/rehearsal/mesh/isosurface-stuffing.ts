/**
 * Isosurface stuffing (Labelle & Shewchuk, "Isosurface stuffing: fast tetrahedral meshes with
 * good dihedral angles", ACM Trans Graph 2007;26(3):57 — from memory), here on the Kuhn lattice
 * of voxel-aligned cells rather than the paper's body-centred cubic one:
 *
 * 1. φ, the organ's signed distance, is read at every lattice node; every lattice edge whose
 *    ends have strictly opposite signs gets a **cut point** where φ = 0 along it.
 * 2. **Warp**: a node within `WARP_LIMIT_CELLS` of a nominal cell (never more than that share of
 *    the edge) of a cut point on one of its edges moves onto the nearest such cut point and
 *    counts as on the surface. Cut points on the edges of a warped node are dropped. This keeps
 *    every remaining cut point well away from the nodes, so no sliver is cut off next to one.
 * 3. **Stencils**: each tet keeps its part inside the surface (φ ≤ 0): the whole tet, a smaller
 *    tet, a pyramid (2 tets) or a prism (3 tets). A quadrilateral face is split along the
 *    diagonal through its vertex of smallest id, the same rule in both tets that share it, so
 *    the pieces stay conforming; a prism whose three quads are split that way is always
 *    decomposable (Dompierre, Labbé, Vallet & Camarero, "How to subdivide pyramids, prisms and
 *    hexahedra into tetrahedra", 8th International Meshing Roundtable 1999 — from memory).
 *
 * Node ids: lattice nodes keep their lattice id; cut point c is `nodeCount + c`.
 */
import type { Vec3 } from '../../geometry/vector';
import {
  forEachCellTet,
  latticeNodeCounts,
  latticeNodePosition,
  type CellLattice,
} from './cell-lattice';
import type { DistanceSampler } from './organ-distance';

/** Farthest a node warps onto a cut point, in nominal cells (and in lengths of its edge). */
export const WARP_LIMIT_CELLS = 0.4;

/** The lattice edges the surface crosses. */
export interface CutEdges {
  /** Lattice ids of each edge's ends, the lower id first. */
  lower: Uint32Array;
  upper: Uint32Array;
  /** Cut index of an edge by `edgeKey`. */
  indexOf: Map<number, number>;
}

/** A key for the lattice edge between lattice nodes a and b (any order). */
export function edgeKey(a: number, b: number): number {
  return a < b ? a * 2 ** 26 + (b - a) : b * 2 ** 26 + (a - b);
}

/** The cells holding at least one lattice node strictly inside the organ, as [ci, cj, ck]. */
export function organCells(lattice: CellLattice, nodePhi: Float64Array): Vec3[] {
  const [ca, cb, cc] = lattice.cellCounts;
  const [na, nb] = latticeNodeCounts(lattice);
  const cells: Vec3[] = [];
  for (let k = 0; k < cc; k++) {
    for (let j = 0; j < cb; j++) {
      for (let i = 0; i < ca; i++) {
        let isTouched = false;
        for (let corner = 0; corner < 8 && !isTouched; corner++) {
          const node = i + (corner & 1) + na * (j + ((corner >> 1) & 1) + nb * (k + (corner >> 2)));
          isTouched = nodePhi[node] < 0;
        }
        if (isTouched) cells.push([i, j, k]);
      }
    }
  }
  return cells;
}

/** The edges of the cells' tets whose ends lie strictly on opposite sides of the surface. */
export function findCutEdges(
  lattice: CellLattice,
  cells: readonly Vec3[],
  nodePhi: Float64Array,
): CutEdges {
  const lower: number[] = [];
  const upper: number[] = [];
  const indexOf = new Map<number, number>();
  for (const [i, j, k] of cells) {
    forEachCellTet(lattice, i, j, k, (tet) => {
      for (let a = 0; a < 4; a++) {
        for (let b = a + 1; b < 4; b++) {
          const [p, q] = [tet[a], tet[b]];
          if (!(nodePhi[p] * nodePhi[q] < 0)) continue;
          const key = edgeKey(p, q);
          if (indexOf.has(key)) continue;
          indexOf.set(key, lower.length);
          lower.push(Math.min(p, q));
          upper.push(Math.max(p, q));
        }
      }
    });
  }
  return { lower: Uint32Array.from(lower), upper: Uint32Array.from(upper), indexOf };
}

/**
 * Where φ = 0 along the edge from `from` (φ = `fromPhi`) to `to` (φ = `toPhi`, the other sign),
 * as the share t of the way: the Illinois variant of regula falsi (Dowell & Jarratt, BIT
 * 1971;11:168 — from memory), which keeps the bracket and converges superlinearly.
 */
export function edgeRoot(
  sample: DistanceSampler,
  from: Readonly<Vec3>,
  to: Readonly<Vec3>,
  fromPhi: number,
  toPhi: number,
  toleranceMm: number,
): number {
  let [ta, fa, tb, fb] = [0, fromPhi, 1, toPhi];
  let t = ta;
  let lastSide = 0;
  for (let iteration = 0; iteration < 40; iteration++) {
    t = (ta * fb - tb * fa) / (fb - fa);
    const f = sample(
      from[0] + (to[0] - from[0]) * t,
      from[1] + (to[1] - from[1]) * t,
      from[2] + (to[2] - from[2]) * t,
    );
    if (Math.abs(f) <= toleranceMm || tb - ta < 1e-12) break;
    if (f * fa > 0) {
      [ta, fa] = [t, f];
      if (lastSide === -1) fb /= 2;
      lastSide = -1;
    } else {
      [tb, fb] = [t, f];
      if (lastSide === 1) fa /= 2;
      lastSide = 1;
    }
  }
  return t;
}

export interface StuffingInput {
  lattice: CellLattice;
  cells: readonly Vec3[];
  nodePhi: Float64Array;
  cuts: CutEdges;
  /** Share of the way from `lower` to `upper` of each cut point. */
  cutShares: Float64Array;
  spacingMm: Readonly<Vec3>;
  cellMm: number;
  /** Lattice nodes not to warp (1): those whose warp spoiled a tet. */
  noWarp: Uint8Array;
}

export interface StuffingResult {
  /** Node positions in voxel index space, 3 per id (lattice nodes, then cut points). */
  positions: Float64Array;
  /** Tets, 4 ids each, positively oriented in index space before warping. */
  tets: number[];
  /** Tets whose 4 corners all lie on the surface: kept only if the caller finds them inside. */
  surfaceTets: number[];
  /** The cut point each lattice node warped onto, or −1. */
  warpedTo: Int32Array;
}

/** Warps the nodes and cuts the tets of the organ's cells (steps 2 and 3 above). */
export function stuff(input: StuffingInput): StuffingResult {
  const { lattice, nodePhi, cuts, cutShares, spacingMm, cellMm, noWarp } = input;
  const nodeCount = nodePhi.length;
  const cutCount = cutShares.length;
  const reference = new Float64Array(3 * (nodeCount + cutCount));
  for (let node = 0; node < nodeCount; node++) {
    reference.set(latticeNodePosition(lattice, node), 3 * node);
  }
  const positions = reference.slice();
  const warpedTo = new Int32Array(nodeCount).fill(-1);
  const warpMm = new Float64Array(nodeCount).fill(Infinity);
  for (let cut = 0; cut < cutCount; cut++) {
    const [low, up] = [cuts.lower[cut], cuts.upper[cut]];
    const t = cutShares[cut];
    let lengthSquared = 0;
    for (let axis = 0; axis < 3; axis++) {
      const from = reference[3 * low + axis];
      const to = reference[3 * up + axis];
      positions[3 * (nodeCount + cut) + axis] = from + (to - from) * t;
      // The reference orientation below puts each cut point at its edge's midpoint.
      reference[3 * (nodeCount + cut) + axis] = (from + to) / 2;
      lengthSquared += ((to - from) * spacingMm[axis]) ** 2;
    }
    const lengthMm = Math.sqrt(lengthSquared);
    const limitMm = WARP_LIMIT_CELLS * Math.min(cellMm, lengthMm);
    for (const [node, distanceMm] of [
      [low, t * lengthMm],
      [up, (1 - t) * lengthMm],
    ]) {
      if (!noWarp[node] && distanceMm <= limitMm && distanceMm < warpMm[node]) {
        warpMm[node] = distanceMm;
        warpedTo[node] = cut;
      }
    }
  }
  for (let node = 0; node < nodeCount; node++) {
    const cut = warpedTo[node];
    if (cut >= 0) positions.copyWithin(3 * node, 3 * (nodeCount + cut), 3 * (nodeCount + cut) + 3);
  }

  const sign = (node: number) => (warpedTo[node] >= 0 ? 0 : Math.sign(nodePhi[node]));
  const cutId = (a: number, b: number) => nodeCount + (cuts.indexOf.get(edgeKey(a, b)) as number);
  const tets: number[] = [];
  const surfaceTets: number[] = [];
  const emit = (a: number, b: number, c: number, d: number) => {
    // Orientation from the reference, where each piece is a convex part of its parent tet: the
    // midpoints of a tet's four edges between two pairs of vertices are coplanar, so there the
    // cut is planar in every case.
    if (signedVolume(reference, a, b, c, d) < 0) tets.push(a, c, b, d);
    else tets.push(a, b, c, d);
  };
  for (const [i, j, k] of input.cells) {
    forEachCellTet(lattice, i, j, k, (tet) => {
      const inside: number[] = [];
      const on: number[] = [];
      const outside: number[] = [];
      for (const node of tet) {
        const s = sign(node);
        (s < 0 ? inside : s > 0 ? outside : on).push(node);
      }
      if (inside.length === 0) {
        if (on.length === 4) surfaceTets.push(...tet);
        return;
      }
      if (outside.length === 0) {
        tets.push(...tet);
        return;
      }
      cutPieces(inside, on, outside, cutId, emit);
    });
  }
  return { positions, tets, surfaceTets, warpedTo };
}

/** The pieces inside the surface of a tet with vertices on both sides of it. */
function cutPieces(
  inside: number[],
  on: number[],
  outside: number[],
  cutId: (a: number, b: number) => number,
  emit: (a: number, b: number, c: number, d: number) => void,
): void {
  if (inside.length === 1) {
    // A smaller tet: the inside vertex, the on vertices and the cut points towards the others.
    const [v] = inside;
    const corners = [v, ...on, ...outside.map((o) => cutId(v, o))];
    emit(corners[0], corners[1], corners[2], corners[3]);
    return;
  }
  if (inside.length === 2 && on.length === 1) {
    // A pyramid on the quad (v1, v2, c2, c1) with its apex at the on vertex.
    const [v1, v2] = inside;
    const [o] = outside;
    splitPyramid(on[0], [v1, v2, cutId(v2, o), cutId(v1, o)], emit);
    return;
  }
  if (inside.length === 2) {
    // A prism between the triangles (v1, c11, c12) and (v2, c21, c22).
    const [v1, v2] = inside;
    const [o1, o2] = outside;
    splitPrism([v1, cutId(v1, o1), cutId(v1, o2)], [v2, cutId(v2, o1), cutId(v2, o2)], emit);
    return;
  }
  // Three inside, one outside: a prism between the inside face and the three cut points.
  const [o] = outside;
  splitPrism(
    inside,
    inside.map((v) => cutId(v, o)),
    emit,
  );
}

/** Two tets of the pyramid with apex `apex` over the quad q0 q1 q2 q3 (cyclic order). */
function splitPyramid(
  apex: number,
  quad: readonly number[],
  emit: (a: number, b: number, c: number, d: number) => void,
): void {
  const [q0, q1, q2, q3] = quad;
  if (Math.min(q0, q2) < Math.min(q1, q3)) {
    emit(apex, q0, q1, q2);
    emit(apex, q0, q2, q3);
  } else {
    emit(apex, q1, q2, q3);
    emit(apex, q1, q3, q0);
  }
}

/**
 * Three tets of the prism with triangles a0 a1 a2 and b0 b1 b2 (a_n joined to b_n). The vertex
 * of smallest id starts the diagonals of its two quads; the tet it makes with the opposite
 * triangle leaves a pyramid over the third quad, split by its own smallest vertex.
 */
function splitPrism(
  a: readonly number[],
  b: readonly number[],
  emit: (a: number, b: number, c: number, d: number) => void,
): void {
  const all = [...a, ...b];
  const smallest = all.indexOf(Math.min(...all));
  const [near, far] = smallest < 3 ? [a, b] : [b, a];
  const n = smallest % 3;
  const [n0, n1, n2] = [near[n], near[(n + 1) % 3], near[(n + 2) % 3]];
  const [f0, f1, f2] = [far[n], far[(n + 1) % 3], far[(n + 2) % 3]];
  emit(n0, f0, f1, f2);
  splitPyramid(n0, [n1, n2, f2, f1], emit);
}

function signedVolume(positions: Float64Array, a: number, b: number, c: number, d: number) {
  const u = [0, 1, 2].map((axis) => positions[3 * b + axis] - positions[3 * a + axis]);
  const v = [0, 1, 2].map((axis) => positions[3 * c + axis] - positions[3 * a + axis]);
  const w = [0, 1, 2].map((axis) => positions[3 * d + axis] - positions[3 * a + axis]);
  return (
    u[0] * (v[1] * w[2] - v[2] * w[1]) -
    u[1] * (v[0] * w[2] - v[2] * w[0]) +
    u[2] * (v[0] * w[1] - v[1] * w[0])
  );
}
