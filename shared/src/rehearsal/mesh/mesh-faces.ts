/**
 * The triangular faces of a tet mesh: which tets use each, and the boundary (faces used once).
 */
import { TET_OUTWARD_FACES, type TetMesh } from './tet-mesh';

/** Every distinct face of a tet mesh and the tets that use it. */
export interface MeshFaces {
  /** 3 node indices per distinct face, as first met, oriented outward from `firstTet`. */
  faces: Uint32Array;
  /** How many tets use each face: 1 on the boundary, 2 inside a conforming mesh. */
  useCounts: Uint32Array;
  /** The first tet using each face. */
  firstTet: Uint32Array;
  /** The second tet using each face, or −1 for a face used once. */
  secondTet: Int32Array;
}

/**
 * Finds the distinct faces of `tets` (4 node indices each, positively oriented) among
 * `nodeCount` nodes. Faces are told apart by their node sets, bucketed by their smallest node:
 * linear in the number of tets, without keys that could overflow on large meshes.
 */
export function meshFaces(tets: Uint32Array, nodeCount: number): MeshFaces {
  const tetCount = tets.length / 4;
  const faceTotal = 4 * tetCount;
  // Sorted corners of every face occurrence.
  const low = new Uint32Array(faceTotal);
  const middle = new Uint32Array(faceTotal);
  const high = new Uint32Array(faceTotal);
  const bucketStart = new Uint32Array(nodeCount + 1);
  for (let tet = 0; tet < tetCount; tet++) {
    for (let face = 0; face < 4; face++) {
      const corners = TET_OUTWARD_FACES[face];
      const a = tets[4 * tet + corners[0]];
      const b = tets[4 * tet + corners[1]];
      const c = tets[4 * tet + corners[2]];
      const occurrence = 4 * tet + face;
      const lowest = Math.min(a, b, c);
      const highest = Math.max(a, b, c);
      low[occurrence] = lowest;
      high[occurrence] = highest;
      middle[occurrence] = a + b + c - lowest - highest;
      bucketStart[lowest + 1]++;
    }
  }
  for (let node = 0; node < nodeCount; node++) bucketStart[node + 1] += bucketStart[node];
  const fill = bucketStart.slice(0, nodeCount);
  const bucketed = new Uint32Array(faceTotal);
  for (let occurrence = 0; occurrence < faceTotal; occurrence++) {
    bucketed[fill[low[occurrence]]++] = occurrence;
  }

  const faces: number[] = [];
  const useCounts: number[] = [];
  const firstTet: number[] = [];
  const secondTet: number[] = [];
  const distinctOf = new Int32Array(faceTotal).fill(-1);
  for (let node = 0; node < nodeCount; node++) {
    const start = bucketStart[node];
    const end = bucketStart[node + 1];
    for (let p = start; p < end; p++) {
      const occurrence = bucketed[p];
      if (distinctOf[occurrence] >= 0) continue;
      const face = useCounts.length;
      distinctOf[occurrence] = face;
      const tet = Math.floor(occurrence / 4);
      const local = TET_OUTWARD_FACES[occurrence % 4];
      faces.push(tets[4 * tet + local[0]], tets[4 * tet + local[1]], tets[4 * tet + local[2]]);
      useCounts.push(1);
      firstTet.push(tet);
      secondTet.push(-1);
      // A bucket holds the few faces around one node: a pairwise scan is cheapest.
      for (let q = p + 1; q < end; q++) {
        const other = bucketed[q];
        if (middle[other] !== middle[occurrence] || high[other] !== high[occurrence]) continue;
        distinctOf[other] = face;
        useCounts[face]++;
        if (useCounts[face] === 2) secondTet[face] = Math.floor(other / 4);
      }
    }
  }
  return {
    faces: Uint32Array.from(faces),
    useCounts: Uint32Array.from(useCounts),
    firstTet: Uint32Array.from(firstTet),
    secondTet: Int32Array.from(secondTet),
  };
}

/**
 * The boundary of a tet mesh: its faces used by one tet only, each oriented outward (its
 * normal by the right-hand rule points away from the tet's fourth node, since the tet is
 * positively oriented). Throws when a face is used by more than two tets — no conforming mesh
 * has one.
 */
export function boundaryFacesOf(tets: Uint32Array, nodeCount: number): Uint32Array {
  const { faces, useCounts } = meshFaces(tets, nodeCount);
  const boundary: number[] = [];
  useCounts.forEach((count, face) => {
    if (count > 2) {
      throw new Error(
        `mesh face ${faces.slice(3 * face, 3 * face + 3).join(', ')} has ${count} tets`,
      );
    }
    if (count === 1) boundary.push(faces[3 * face], faces[3 * face + 1], faces[3 * face + 2]);
  });
  return Uint32Array.from(boundary);
}

/** The nodes on the boundary of the mesh (those of its boundary faces), ascending. */
export function surfaceNodes(mesh: TetMesh): Uint32Array {
  const nodeCount = mesh.nodes.length / 3;
  const isOnSurface = new Uint8Array(nodeCount);
  for (const node of mesh.boundaryFaces) isOnSurface[node] = 1;
  const nodes: number[] = [];
  isOnSurface.forEach((flag, node) => {
    if (flag) nodes.push(node);
  });
  return Uint32Array.from(nodes);
}
