/**
 * The linear tetrahedral mesh of the insertion rehearsal: the organ as the finite-element solver
 * sees it. Positions LPS, millimetres (DICOM PS3.3 C.7.6.2.1.1).
 */
/** A linear tetrahedral mesh, positions in LPS millimetres. */
export interface TetMesh {
  /** x, y, z of each node, LPS, millimetres: 3 per node. */
  nodes: Float64Array;
  /** 4 node indices per tet, positively oriented (signed volume > 0). */
  tets: Uint32Array;
  /** 3 node indices per boundary triangle, outward-facing (right-hand rule). */
  boundaryFaces: Uint32Array;
  /** Nominal edge of the hexahedral cells the mesh was cut from, millimetres. */
  cellMm: number;
}

/** How finely the organ is meshed: cells of about 8, 6 and 4 mm. */
export type MeshResolution = 'coarse' | 'medium' | 'fine';

export const meshResolutions: readonly MeshResolution[] = ['coarse', 'medium', 'fine'];

/** Nominal cell edge of each resolution, millimetres. */
export const meshCellMm: Record<MeshResolution, number> = { coarse: 8, medium: 6, fine: 4 };

export const DEFAULT_MESH_RESOLUTION: MeshResolution = 'medium';

/**
 * The outward faces of a positively oriented tet (v0, v1, v2, v3), as local vertex numbers:
 * face f is the one opposite vertex f. With det(v1 − v0, v2 − v0, v3 − v0) > 0 each triple's
 * normal (b − a) × (c − a) points away from the vertex it omits (checked on every boundary face
 * in organ-mesh.spec.ts).
 */
export const TET_OUTWARD_FACES: readonly (readonly [number, number, number])[] = [
  [1, 2, 3],
  [0, 3, 2],
  [0, 1, 3],
  [0, 2, 1],
];

/**
 * Signed volume of the tet (a, b, c, d) given by node indices into `nodes`, mm³:
 * det(b − a, c − a, d − a) / 6, positive when the tet is positively oriented.
 */
export function tetSignedVolume(
  nodes: Float64Array,
  a: number,
  b: number,
  c: number,
  d: number,
): number {
  const ax = nodes[3 * a];
  const ay = nodes[3 * a + 1];
  const az = nodes[3 * a + 2];
  const ux = nodes[3 * b] - ax;
  const uy = nodes[3 * b + 1] - ay;
  const uz = nodes[3 * b + 2] - az;
  const vx = nodes[3 * c] - ax;
  const vy = nodes[3 * c + 1] - ay;
  const vz = nodes[3 * c + 2] - az;
  const wx = nodes[3 * d] - ax;
  const wy = nodes[3 * d + 1] - ay;
  const wz = nodes[3 * d + 2] - az;
  return (ux * (vy * wz - vz * wy) - uy * (vx * wz - vz * wx) + uz * (vx * wy - vy * wx)) / 6;
}
