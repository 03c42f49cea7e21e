/**
 * Small structured meshes for the tissue solver's tests and benchmark (not for patients): a
 * box of nx × ny × nz cuboid cells, each split into six positively oriented tetrahedra around
 * its main diagonal (the Kuhn/Freudenthal split, which conforms across cells without
 * alternating patterns). Positions in millimetres, as the solver's mesh input.
 */

/** A block mesh: the fields of a rehearsal TetMesh, plus the lattice to find nodes by. */
export interface BlockMesh {
  nodes: Float64Array;
  tets: Uint32Array;
  /** Surface triangles, 3 node indices each, counter-clockwise seen from outside. */
  boundaryFaces: Uint32Array;
  /** Largest cell edge, mm. */
  cellMm: number;
  counts: readonly [number, number, number];
  sizeMm: readonly [number, number, number];
  /** Node index of lattice point (i, j, k), 0 ≤ i ≤ nx… */
  nodeAt(i: number, j: number, k: number): number;
}

/** A box [origin, origin + size] (mm) meshed with counts[0] × counts[1] × counts[2] cells. */
export function blockMesh(
  counts: readonly [number, number, number],
  sizeMm: readonly [number, number, number],
  originMm: readonly [number, number, number] = [0, 0, 0],
): BlockMesh {
  const [nx, ny, nz] = counts;
  const nodeAt = (i: number, j: number, k: number): number => i + (nx + 1) * (j + (ny + 1) * k);
  const nodes = new Float64Array(3 * (nx + 1) * (ny + 1) * (nz + 1));
  for (let k = 0; k <= nz; k++) {
    for (let j = 0; j <= ny; j++) {
      for (let i = 0; i <= nx; i++) {
        const node = nodeAt(i, j, k);
        nodes[3 * node] = originMm[0] + (sizeMm[0] * i) / nx;
        nodes[3 * node + 1] = originMm[1] + (sizeMm[1] * j) / ny;
        nodes[3 * node + 2] = originMm[2] + (sizeMm[2] * k) / nz;
      }
    }
  }
  // The six paths from corner 000 to 111 along the axes, one tet each.
  const orders = [
    [0, 1, 2],
    [0, 2, 1],
    [1, 0, 2],
    [1, 2, 0],
    [2, 0, 1],
    [2, 1, 0],
  ];
  const tets = new Uint32Array(4 * 6 * nx * ny * nz);
  let tet = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        for (const order of orders) {
          const step = [0, 0, 0];
          const corners = [nodeAt(i, j, k)];
          for (const axis of order) {
            step[axis] = 1;
            corners.push(nodeAt(i + step[0], j + step[1], k + step[2]));
          }
          // Odd permutations of the axes give negatively oriented paths: swap two corners.
          if (orientation(nodes, corners) < 0) [corners[1], corners[2]] = [corners[2], corners[1]];
          tets.set(corners, 4 * tet++);
        }
      }
    }
  }
  return {
    nodes,
    tets,
    boundaryFaces: surfaceTriangles(tets),
    cellMm: Math.max(sizeMm[0] / nx, sizeMm[1] / ny, sizeMm[2] / nz),
    counts,
    sizeMm,
    nodeAt,
  };
}

/** det[x1 − x0, x2 − x0, x3 − x0] of four nodes. */
export function orientation(nodes: Float64Array, corners: readonly number[]): number {
  const e = [1, 2, 3].map((c) =>
    [0, 1, 2].map((axis) => nodes[3 * corners[c] + axis] - nodes[3 * corners[0] + axis]),
  );
  return (
    e[0][0] * (e[1][1] * e[2][2] - e[1][2] * e[2][1]) -
    e[1][0] * (e[0][1] * e[2][2] - e[0][2] * e[2][1]) +
    e[2][0] * (e[0][1] * e[1][2] - e[0][2] * e[1][1])
  );
}

/**
 * Triangles that belong to one tet only (the surface), oriented outwards: a positively
 * oriented tet (0, 1, 2, 3) has outward faces (1, 2, 3), (0, 3, 2), (0, 1, 3), (0, 2, 1).
 */
export function surfaceTriangles(tets: Uint32Array): Uint32Array {
  const faces = [
    [1, 2, 3],
    [0, 3, 2],
    [0, 1, 3],
    [0, 2, 1],
  ];
  const seen = new Map<string, number[] | null>();
  for (let tet = 0; tet < tets.length / 4; tet++) {
    for (const face of faces) {
      const triangle = face.map((corner) => tets[4 * tet + corner]);
      const key = [...triangle].sort((a, b) => a - b).join(',');
      seen.set(key, seen.has(key) ? null : triangle);
    }
  }
  const out: number[] = [];
  for (const triangle of seen.values()) if (triangle) out.push(...triangle);
  return Uint32Array.from(out);
}

/**
 * Each node's share of the surface lying in the plane position[axis] = valueMm (mm² per node,
 * a third of each incident triangle): the consistent nodal loads of a uniform traction on
 * linear triangles are traction × these areas.
 */
export function faceNodeAreasMm2(
  mesh: BlockMesh,
  axis: 0 | 1 | 2,
  valueMm: number,
): Map<number, number> {
  const areas = new Map<number, number>();
  const tolerance = 1e-9 * Math.max(...mesh.sizeMm);
  const { nodes, boundaryFaces } = mesh;
  for (let face = 0; face < boundaryFaces.length / 3; face++) {
    const corners = [0, 1, 2].map((c) => boundaryFaces[3 * face + c]);
    if (!corners.every((node) => Math.abs(nodes[3 * node + axis] - valueMm) <= tolerance)) {
      continue;
    }
    const a = [0, 1, 2].map((i) => nodes[3 * corners[1] + i] - nodes[3 * corners[0] + i]);
    const b = [0, 1, 2].map((i) => nodes[3 * corners[2] + i] - nodes[3 * corners[0] + i]);
    const area =
      0.5 *
      Math.hypot(a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]);
    for (const node of corners) areas.set(node, (areas.get(node) ?? 0) + area / 3);
  }
  return areas;
}

/** Nodes whose coordinate on `axis` equals valueMm (mm). */
export function nodesOnPlane(mesh: BlockMesh, axis: 0 | 1 | 2, valueMm: number): number[] {
  const tolerance = 1e-9 * Math.max(...mesh.sizeMm);
  const out: number[] = [];
  for (let node = 0; node < mesh.nodes.length / 3; node++) {
    if (Math.abs(mesh.nodes[3 * node + axis] - valueMm) <= tolerance) out.push(node);
  }
  return out;
}
