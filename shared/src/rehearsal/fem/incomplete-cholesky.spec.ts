import { describe, expect, it } from 'vitest';
import { buildBlockPattern, type BlockPattern } from './block-csr';
import { IncompleteCholesky } from './incomplete-cholesky';
import { LIVER_MATERIAL, type TissueMaterial } from './material';
import { PcgWorkspace, projectedPcg } from './pcg';
import { blockMesh } from './testing/block-mesh';
import { denseMultiply, denseSolve, seededRandom } from './testing/dense';
import { denseCorotationalSystem } from './testing/dense-reference';

/** The dense stiffness of a mesh (rest state, m) copied into node-block CSR values. */
function blockValues(pattern: BlockPattern, dense: Float64Array): Float64Array {
  const n = 3 * pattern.nodeCount;
  const values = new Float64Array(9 * pattern.columns.length);
  for (let row = 0; row < pattern.nodeCount; row++) {
    for (let slot = pattern.rowStart[row]; slot < pattern.rowStart[row + 1]; slot++) {
      const column = pattern.columns[slot];
      for (let a = 0; a < 3; a++) {
        for (let b = 0; b < 3; b++) {
          values[9 * slot + 3 * a + b] = dense[n * (3 * row + a) + 3 * column + b];
        }
      }
    }
  }
  return values;
}

function stiffnessOf(nodesMm: Float64Array, tets: Uint32Array, material: TissueMaterial) {
  const restM = nodesMm.map((value) => value / 1000);
  return denseCorotationalSystem(restM, tets, restM, material);
}

describe('incomplete Cholesky IC(0)', () => {
  // With no fill to drop (one tetrahedron couples all its nodes) IC(0) is the complete Cholesky
  // factorisation, so (L·Lᵀ)⁻¹ is A⁻¹ (Golub & Van Loan, Matrix Computations, §4.2).
  it('is the exact Cholesky factorisation when the pattern is full', () => {
    const nodes = Float64Array.from([0, 0, 0, 10, 1, 0, 2, 9, 1, 1, 2, 8]);
    const tets = Uint32Array.from([0, 1, 2, 3]);
    const { stiffness, masses } = stiffnessOf(nodes, tets, LIVER_MATERIAL);
    const pattern = buildBlockPattern(4, tets);
    const scale = 4e-4;
    const dense = stiffness.map(
      (value, index) => scale * value + (index % 13 === 0 ? masses[index / 13] : 0),
    );
    const constrained = new Uint8Array(12);
    constrained[4] = 1;
    const ic = new IncompleteCholesky(pattern);
    expect(ic.factor(blockValues(pattern, stiffness), scale, masses, constrained)).toBe(true);
    expect(ic.shift).toBe(0);
    const random = seededRandom(8);
    const r = Float64Array.from({ length: 12 }, (_, dof) => (dof === 4 ? 0 : random() - 0.5));
    const z = new Float64Array(12);
    ic.solve(r, z);
    // The reduced system without unknown 4.
    const free = [...Array(12).keys()].filter((dof) => dof !== 4);
    const reduced = Float64Array.from(
      free.flatMap((row) => free.map((col) => dense[12 * row + col])),
    );
    const exact = denseSolve(reduced, Float64Array.from(free.map((dof) => r[dof])));
    const size = Math.max(...exact.map(Math.abs));
    free.forEach((dof, index) =>
      expect(Math.abs(z[dof] - exact[index])).toBeLessThan(1e-12 * size),
    );
    expect(z[4]).toBe(0);
  });

  // IC(0) can break down on symmetric positive definite matrices that are not M-matrices;
  // factoring with the off-diagonal entries divided by 1 + σ succeeds for σ large enough
  // (Manteuffel, Math Comp 1980;34:473).
  it('shifts on a nearly incompressible distorted mesh where plain IC(0) breaks down, and CG still converges', () => {
    const mesh = blockMesh([3, 3, 3], [30, 30, 30]);
    const random = seededRandom(1);
    for (let index = 0; index < mesh.nodes.length; index++)
      mesh.nodes[index] += (random() - 0.5) * 3.5;
    const material = { ...LIVER_MATERIAL, poissonRatio: 0.499 };
    const { stiffness } = stiffnessOf(mesh.nodes, mesh.tets, material);
    const pattern = buildBlockPattern(mesh.nodes.length / 3, mesh.tets);
    const n = mesh.nodes.length;
    // Three nodes fixed: the static stiffness is then positive definite.
    const constrained = new Uint8Array(n).map((_, dof) => (dof < 9 ? 1 : 0));
    const values = blockValues(pattern, stiffness);
    const ic = new IncompleteCholesky(pattern);
    expect(ic.factor(values, 1, new Float64Array(n), constrained)).toBe(true);
    expect(ic.shift).toBeGreaterThan(0);
    const b = Float64Array.from({ length: n }, (_, dof) => (dof < 9 ? 0 : random() - 0.5));
    const y = new Float64Array(n);
    const report = projectedPcg(
      (x, out) => out.set(denseMultiply(stiffness, x)),
      (r, z) => ic.solve(r, z),
      constrained,
      b,
      y,
      { relativeTolerance: 1e-10, maxIterations: 2000 },
      new PcgWorkspace(n),
    );
    expect(report.converged).toBe(true);
    const free = [...Array(n).keys()].filter((dof) => dof >= 9);
    const reduced = Float64Array.from(
      free.flatMap((row) => free.map((col) => stiffness[n * row + col])),
    );
    const exact = denseSolve(reduced, Float64Array.from(free.map((dof) => b[dof])));
    const size = Math.max(...exact.map(Math.abs));
    // ν = 0.499 makes the system ill-conditioned: a 1e-10 residual leaves ~1e-6 of error.
    free.forEach((dof, index) => expect(Math.abs(y[dof] - exact[index])).toBeLessThan(1e-5 * size));
  });
});
