/**
 * The corotational system of a small mesh assembled densely, straight from the definitions
 * (Müller & Gross 2004): K = Σ_e R_e·Ke·R_eᵀ with the 12×12 rest stiffness, forces
 * f = −Σ_e R_e·Ke·(R_eᵀ·x − x0), lumped masses ρ·V/4. For tests only: it shares the rotation
 * and the rest stiffness with the solver (both tested on their own) and nothing else.
 */
import { lameParameters, type TissueMaterial } from '../material';
import { rotationOfDeformation } from '../polar-decomposition';
import { restStiffness, shapeGradients, tetRestData } from '../tet-element';

/** Dense n×n stiffness (row-major), elastic forces and per-DOF masses at positions x (m). */
export function denseCorotationalSystem(
  restM: Float64Array,
  tets: Uint32Array,
  x: Float64Array,
  material: TissueMaterial,
): { stiffness: Float64Array; forces: Float64Array; masses: Float64Array } {
  const n = x.length;
  const { lambdaPa, muPa } = lameParameters(material);
  const { restInverse, volumes } = tetRestData(restM, tets);
  const stiffness = new Float64Array(n * n);
  const forces = new Float64Array(n);
  const masses = new Float64Array(n);
  for (let tet = 0; tet < volumes.length; tet++) {
    const g = shapeGradients(restInverse.subarray(9 * tet, 9 * tet + 9));
    const ke = restStiffness(g, volumes[tet], lambdaPa, muPa);
    const nodes = Array.from(tets.subarray(4 * tet, 4 * tet + 4));
    const dofOf = (p: number) => 3 * nodes[Math.floor(p / 3)] + (p % 3);
    const f = new Float64Array(9);
    nodes.forEach((node, a) => {
      for (let i = 0; i < 3; i++) {
        for (let j = 0; j < 3; j++) f[3 * i + j] += x[3 * node + i] * g[3 * a + j];
      }
    });
    const r = new Float64Array(9);
    rotationOfDeformation(f, r);
    // The 12×12 block rotation diag(R, R, R, R).
    const rot = (row: number, col: number) =>
      Math.floor(row / 3) === Math.floor(col / 3) ? r[3 * (row % 3) + (col % 3)] : 0;
    const local = new Float64Array(12);
    for (let p = 0; p < 12; p++) {
      for (let q = 0; q < 12; q++) local[p] += rot(q, p) * x[dofOf(q)];
      local[p] -= restM[dofOf(p)];
    }
    for (let p = 0; p < 12; p++) {
      let force = 0;
      for (let s = 0; s < 12; s++) {
        let keLocal = 0;
        for (let u = 0; u < 12; u++) keLocal += ke[12 * s + u] * local[u];
        force -= rot(p, s) * keLocal;
      }
      forces[dofOf(p)] += force;
      for (let q = 0; q < 12; q++) {
        let sum = 0;
        for (let s = 0; s < 12; s++) {
          for (let u = 0; u < 12; u++) sum += rot(p, s) * ke[12 * s + u] * rot(q, u);
        }
        stiffness[n * dofOf(p) + dofOf(q)] += sum;
      }
    }
    for (const node of nodes) {
      for (let i = 0; i < 3; i++)
        masses[3 * node + i] += (material.densityKgPerM3 * volumes[tet]) / 4;
    }
  }
  return { stiffness, forces, masses };
}
