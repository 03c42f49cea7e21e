/**
 * Shape measures of linear tetrahedra. The two that matter to a finite-element solver are the
 * dihedral angles (a small one — a sliver — ruins the stiffness matrix's conditioning, a large
 * one the interpolation of gradients) and the radius ratio; both as discussed by Shewchuk,
 * "What is a good linear finite element? Interpolation, conditioning, anisotropy, and quality
 * measures", 2002 (from memory).
 *
 * Aspect ratio here is the normalised circumradius-to-inradius ratio R / (3r): 1 for the regular
 * tetrahedron (R = a√6/4, r = a√6/12), growing without bound as a tet flattens, Infinity for a
 * degenerate one. It is the reciprocal of the "radius ratio" 3r/R of the same paper.
 */
import { TET_OUTWARD_FACES, type TetMesh } from './tet-mesh';

/** Figures of a whole mesh. Angles in degrees, volume in mm³. */
export interface MeshQuality {
  tetCount: number;
  nodeCount: number;
  /** Smallest dihedral angle of any tet, degrees (70.53° for the regular tet). */
  minDihedralDeg: number;
  /** Largest R / (3r) of any tet (1 for the regular tet). */
  maxAspectRatio: number;
  meanAspectRatio: number;
  /** Sum of the tets' signed volumes, mm³. */
  volumeMm3: number;
}

/** Shape of one tet. */
export interface TetShape {
  /** Signed volume, mm³ (positive when positively oriented). */
  volumeMm3: number;
  /** Smallest and largest of the six dihedral angles, radians. */
  minDihedralRad: number;
  maxDihedralRad: number;
  /** R / (3r); Infinity for a degenerate tet. */
  aspectRatio: number;
}

const scratch = new Float64Array(12);
const normals = new Float64Array(12);

/** The shape of the tet (a, b, c, d), node indices into `nodes` (3 per node, mm). */
export function tetShape(
  nodes: Float64Array,
  a: number,
  b: number,
  c: number,
  d: number,
): TetShape {
  const corners = [a, b, c, d];
  for (let v = 0; v < 4; v++) {
    scratch[3 * v] = nodes[3 * corners[v]];
    scratch[3 * v + 1] = nodes[3 * corners[v] + 1];
    scratch[3 * v + 2] = nodes[3 * corners[v] + 2];
  }
  return shapeOfCorners(scratch);
}

/** The shape of a tet given by its 4 corners, 3 numbers each (mm). */
export function shapeOfCorners(p: ArrayLike<number>): TetShape {
  // Face normals by the right-hand rule, outward for a positive tet; |n| is twice the area.
  let areaSum = 0;
  const faceArea = [0, 0, 0, 0];
  for (let face = 0; face < 4; face++) {
    const [i, j, k] = TET_OUTWARD_FACES[face];
    const ux = p[3 * j] - p[3 * i];
    const uy = p[3 * j + 1] - p[3 * i + 1];
    const uz = p[3 * j + 2] - p[3 * i + 2];
    const vx = p[3 * k] - p[3 * i];
    const vy = p[3 * k + 1] - p[3 * i + 1];
    const vz = p[3 * k + 2] - p[3 * i + 2];
    normals[3 * face] = uy * vz - uz * vy;
    normals[3 * face + 1] = uz * vx - ux * vz;
    normals[3 * face + 2] = ux * vy - uy * vx;
    faceArea[face] =
      Math.hypot(normals[3 * face], normals[3 * face + 1], normals[3 * face + 2]) / 2;
    areaSum += faceArea[face];
  }
  // The dihedral angle at the edge shared by faces f and g is π minus the angle between their
  // outward normals. Flipping the tet flips every normal, so it leaves the angles unchanged.
  let minDihedralRad = Math.PI;
  let maxDihedralRad = 0;
  for (let f = 0; f < 4; f++) {
    for (let g = f + 1; g < 4; g++) {
      const product = 4 * faceArea[f] * faceArea[g];
      let angle = 0;
      if (product > 0) {
        const cosine =
          -(
            normals[3 * f] * normals[3 * g] +
            normals[3 * f + 1] * normals[3 * g + 1] +
            normals[3 * f + 2] * normals[3 * g + 2]
          ) / product;
        angle = Math.acos(Math.min(1, Math.max(-1, cosine)));
      }
      minDihedralRad = Math.min(minDihedralRad, angle);
      maxDihedralRad = Math.max(maxDihedralRad, angle);
    }
  }

  const ax = p[3] - p[0];
  const ay = p[4] - p[1];
  const az = p[5] - p[2];
  const bx = p[6] - p[0];
  const by = p[7] - p[1];
  const bz = p[8] - p[2];
  const cx = p[9] - p[0];
  const cy = p[10] - p[1];
  const cz = p[11] - p[2];
  const bcx = by * cz - bz * cy;
  const bcy = bz * cx - bx * cz;
  const bcz = bx * cy - by * cx;
  const determinant = ax * bcx + ay * bcy + az * bcz;
  const volumeMm3 = determinant / 6;
  let aspectRatio = Infinity;
  if (determinant !== 0 && areaSum > 0) {
    // Circumcentre relative to p0: (|a|²(b×c) + |b|²(c×a) + |c|²(a×b)) / (2 a·(b×c)).
    const a2 = ax * ax + ay * ay + az * az;
    const b2 = bx * bx + by * by + bz * bz;
    const c2 = cx * cx + cy * cy + cz * cz;
    const cax = cy * az - cz * ay;
    const cay = cz * ax - cx * az;
    const caz = cx * ay - cy * ax;
    const abx = ay * bz - az * by;
    const aby = az * bx - ax * bz;
    const abz = ax * by - ay * bx;
    const ox = a2 * bcx + b2 * cax + c2 * abx;
    const oy = a2 * bcy + b2 * cay + c2 * aby;
    const oz = a2 * bcz + b2 * caz + c2 * abz;
    const circumradius = Math.hypot(ox, oy, oz) / (2 * Math.abs(determinant));
    // Inradius r = 3V / (sum of face areas), so R / (3r) = R · S / (9 |V|).
    aspectRatio = (circumradius * areaSum) / (9 * Math.abs(volumeMm3));
  }
  return { volumeMm3, minDihedralRad, maxDihedralRad, aspectRatio };
}

/** Counts, smallest dihedral angle, aspect ratios and volume of a mesh. */
export function meshQuality(mesh: TetMesh): MeshQuality {
  const tetCount = mesh.tets.length / 4;
  let minDihedralRad = Math.PI;
  let maxAspectRatio = 0;
  let aspectSum = 0;
  let volumeMm3 = 0;
  for (let tet = 0; tet < tetCount; tet++) {
    const t = 4 * tet;
    const shape = tetShape(
      mesh.nodes,
      mesh.tets[t],
      mesh.tets[t + 1],
      mesh.tets[t + 2],
      mesh.tets[t + 3],
    );
    minDihedralRad = Math.min(minDihedralRad, shape.minDihedralRad);
    maxAspectRatio = Math.max(maxAspectRatio, shape.aspectRatio);
    aspectSum += shape.aspectRatio;
    volumeMm3 += shape.volumeMm3;
  }
  return {
    tetCount,
    nodeCount: mesh.nodes.length / 3,
    minDihedralDeg: tetCount > 0 ? (minDihedralRad * 180) / Math.PI : 0,
    maxAspectRatio,
    meanAspectRatio: tetCount > 0 ? aspectSum / tetCount : 0,
    volumeMm3,
  };
}
