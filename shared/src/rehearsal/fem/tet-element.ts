/**
 * The linear tetrahedron at rest: volume, shape-function gradients and its 12×12 stiffness.
 *
 * With rest corners X0…X3 and Dm = [X1 − X0, X2 − X0, X3 − X0] (columns), a point is
 * X = X0 + Dm·ξ, the shape functions are N_k = ξ_k (k = 1…3) and N_0 = 1 − ξ1 − ξ2 − ξ3, so
 * ∇N_k is row k of Dm⁻¹ and ∇N_0 = −(∇N_1 + ∇N_2 + ∇N_3). The deformation gradient of current
 * corners x_a is F = Σ_a x_a ⊗ ∇N_a = Ds·Dm⁻¹ with Ds = [x1 − x0, x2 − x0, x3 − x0].
 *
 * For isotropic linear elasticity (Lamé λ, μ) the 3×3 block of the stiffness coupling corners
 * a and b, with gradients g_a and g_b, is
 *
 *   K_ab = V·(λ·g_a·g_bᵀ + μ·g_b·g_aᵀ + μ·(g_a·g_b)·I),
 *
 * which is V·Bᵀ·D·B written out per block (the test checks it against the Voigt form). It makes
 * rotating the stiffness cheap: R·K_ab·Rᵀ is the same expression in the rotated gradients R·g.
 */
import { FemInputError } from './fem-errors';

/** Per-tetrahedron rest data of a mesh, SI. */
export interface TetRestData {
  /** Dm⁻¹ of each tet, row-major, 9 per tet, 1/m: its rows are ∇N_1, ∇N_2, ∇N_3. */
  restInverse: Float64Array;
  /** Rest volume of each tet, m³. */
  volumes: Float64Array;
}

/**
 * Rest data of every tetrahedron. Throws FemInputError for a tet with a node index out of range
 * or a non-positive volume (the mesh contract is positively oriented tets: det Dm > 0).
 */
export function tetRestData(positionsM: Float64Array, tets: Uint32Array): TetRestData {
  const nodeCount = positionsM.length / 3;
  const tetCount = tets.length / 4;
  const restInverse = new Float64Array(9 * tetCount);
  const volumes = new Float64Array(tetCount);
  const dm = new Float64Array(9);
  for (let tet = 0; tet < tetCount; tet++) {
    const n0 = tets[4 * tet];
    for (let corner = 0; corner < 4; corner++) {
      if (tets[4 * tet + corner] >= nodeCount) {
        throw new FemInputError(
          `Tetrahedron ${tet} refers to node ${tets[4 * tet + corner]}, but the mesh has ` +
            `${nodeCount} nodes.`,
        );
      }
    }
    let edgeScale = 0;
    for (let k = 1; k <= 3; k++) {
      const nk = tets[4 * tet + k];
      for (let i = 0; i < 3; i++) {
        const edge = positionsM[3 * nk + i] - positionsM[3 * n0 + i];
        dm[3 * i + (k - 1)] = edge;
        edgeScale = Math.max(edgeScale, Math.abs(edge));
      }
    }
    const det =
      dm[0] * (dm[4] * dm[8] - dm[5] * dm[7]) -
      dm[1] * (dm[3] * dm[8] - dm[5] * dm[6]) +
      dm[2] * (dm[3] * dm[7] - dm[4] * dm[6]);
    // A sliver whose volume is lost in rounding is as unusable as an inverted tet.
    if (!(det > 1e-12 * edgeScale * edgeScale * edgeScale)) {
      throw new FemInputError(
        `Tetrahedron ${tet} (nodes ${Array.from(tets.subarray(4 * tet, 4 * tet + 4)).join(', ')}) ` +
          (det < 0 ? 'is negatively oriented' : 'has no volume') +
          ': the mesh must give positively oriented tetrahedra, det[x1−x0, x2−x0, x3−x0] > 0.',
      );
    }
    volumes[tet] = det / 6;
    const out = restInverse.subarray(9 * tet, 9 * tet + 9);
    out[0] = (dm[4] * dm[8] - dm[5] * dm[7]) / det;
    out[1] = (dm[2] * dm[7] - dm[1] * dm[8]) / det;
    out[2] = (dm[1] * dm[5] - dm[2] * dm[4]) / det;
    out[3] = (dm[5] * dm[6] - dm[3] * dm[8]) / det;
    out[4] = (dm[0] * dm[8] - dm[2] * dm[6]) / det;
    out[5] = (dm[2] * dm[3] - dm[0] * dm[5]) / det;
    out[6] = (dm[3] * dm[7] - dm[4] * dm[6]) / det;
    out[7] = (dm[1] * dm[6] - dm[0] * dm[7]) / det;
    out[8] = (dm[0] * dm[4] - dm[1] * dm[3]) / det;
  }
  return { restInverse, volumes };
}

/**
 * Shape-function gradients ∇N_0…∇N_3 (12 numbers, 1/m) of one tet from its Dm⁻¹ (9 numbers).
 */
export function shapeGradients(restInverse: ArrayLike<number>, out = new Float64Array(12)) {
  for (let i = 0; i < 3; i++) {
    out[3 + i] = restInverse[i];
    out[6 + i] = restInverse[3 + i];
    out[9 + i] = restInverse[6 + i];
    out[i] = -(restInverse[i] + restInverse[3 + i] + restInverse[6 + i]);
  }
  return out;
}

/**
 * Rest stiffness Ke (12×12, row-major, N/m) of one tet, degrees of freedom ordered corner by
 * corner (x0, y0, z0, x1, …), from its gradients (shapeGradients), volume and Lamé parameters.
 * The solver never builds it: it applies the same blocks rotated (see tissue-solver.ts); this
 * is the reference form for tests and for readers.
 */
export function restStiffness(
  gradients: ArrayLike<number>,
  volumeM3: number,
  lambdaPa: number,
  muPa: number,
): Float64Array {
  const ke = new Float64Array(144);
  for (let a = 0; a < 4; a++) {
    for (let b = 0; b < 4; b++) {
      let dot = 0;
      for (let i = 0; i < 3; i++) dot += gradients[3 * a + i] * gradients[3 * b + i];
      for (let i = 0; i < 3; i++) {
        for (let k = 0; k < 3; k++) {
          ke[12 * (3 * a + i) + 3 * b + k] =
            volumeM3 *
            (lambdaPa * gradients[3 * a + i] * gradients[3 * b + k] +
              muPa * gradients[3 * b + i] * gradients[3 * a + k] +
              (i === k ? muPa * dot : 0));
        }
      }
    }
  }
  return ke;
}
