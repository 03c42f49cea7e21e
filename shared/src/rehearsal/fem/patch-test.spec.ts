import { describe, expect, it } from 'vitest';
import { blockMesh } from './testing/block-mesh';
import { multiply3, rotationMatrix, seededRandom } from './testing/dense';
import { TissueSolver, type PointM } from './tissue-solver';

/**
 * The patch test (Irons & Razzaque 1972; Zienkiewicz & Taylor, The Finite Element Method,
 * vol. 1, chapter on the patch test — from memory): displacements of a linear field imposed on
 * the boundary of a patch of distorted elements must be reproduced exactly at the interior
 * nodes, because the elements can represent constant strain. Static solve.
 */
function patchTest(gradient: Float64Array, seed: number) {
  const mesh = blockMesh([3, 3, 3], [30, 30, 30]);
  const random = seededRandom(seed);
  const interior: number[] = [];
  for (let k = 1; k < 3; k++) {
    for (let j = 1; j < 3; j++) {
      for (let i = 1; i < 3; i++) {
        const node = mesh.nodeAt(i, j, k);
        interior.push(node);
        // Distort the patch: interior nodes moved up to ±2.5 mm in cells of 10 mm.
        for (let axis = 0; axis < 3; axis++) mesh.nodes[3 * node + axis] += (random() - 0.5) * 5;
      }
    }
  }
  const offset = [0.002, -0.001, 0.003];
  // x(X) = F·X + c with F = I + gradient: the exact solution everywhere.
  const exact = (node: number): PointM => {
    const x = [0, 1, 2].map((axis) => mesh.nodes[3 * node + axis] / 1000);
    const row = (i: number) =>
      x[i] + gradient[3 * i] * x[0] + gradient[3 * i + 1] * x[1] + gradient[3 * i + 2] * x[2];
    return [row(0) + offset[0], row(1) + offset[1], row(2) + offset[2]];
  };
  const driven = [];
  for (let node = 0; node < mesh.nodes.length / 3; node++) {
    if (interior.includes(node)) continue;
    const target = exact(node);
    driven.push({ node, positionM: () => target });
  }
  const solver = new TissueSolver(mesh, {
    boundary: { driven },
    relativeTolerance: 1e-13,
    maxIterations: 500,
  });
  const report = solver.solveStatic({ toleranceM: 1e-15, maxIterations: 100 });
  let worst = 0;
  for (const node of interior) {
    const target = exact(node);
    for (let axis = 0; axis < 3; axis++) {
      worst = Math.max(worst, Math.abs(solver.positionsM[3 * node + axis] - target[axis]));
    }
  }
  const forces = new Float64Array(3 * solver.nodeCount);
  solver.forces(forces);
  let worstInteriorForce = 0;
  let largestForce = 0;
  for (let dof = 0; dof < forces.length; dof++) {
    largestForce = Math.max(largestForce, Math.abs(forces[dof]));
    if (interior.includes((dof / 3) | 0)) {
      worstInteriorForce = Math.max(worstInteriorForce, Math.abs(forces[dof]));
    }
  }
  return { report, worst, worstInteriorForce, largestForce };
}

describe('patch test (constant strain reproduced exactly)', () => {
  it('reproduces a small linear displacement field at the interior nodes of a distorted patch', () => {
    // A general (non-symmetric) small gradient: strain and a little rotation.
    const gradient = Float64Array.from([1e-3, 4e-4, -2e-4, -3e-4, -5e-4, 6e-4, 2e-4, 1e-4, 8e-4]);
    const { report, worst, worstInteriorForce, largestForce } = patchTest(gradient, 21);
    expect(report.converged).toBe(true);
    // Displacements are ~3e-5 m; exact up to rounding.
    expect(worst).toBeLessThan(1e-14);
    expect(largestForce).toBeGreaterThan(0);
    expect(worstInteriorForce).toBeLessThan(1e-10 * largestForce);
  });

  it('also under a 40° rotation with 5 % stretch: the corotational element passes at finite rotation', () => {
    // F = R·(I + E): x = F·X, gradient = F − I.
    const stretch = Float64Array.from([1.05, 0.01, 0, 0.01, 0.98, 0.02, 0, 0.02, 1.03]);
    const f = multiply3(rotationMatrix([1, 2, 2], (40 * Math.PI) / 180), stretch);
    const gradient = f.map((value, index) => value - (index % 4 === 0 ? 1 : 0));
    const { report, worst, worstInteriorForce, largestForce } = patchTest(gradient, 22);
    expect(report.converged).toBe(true);
    expect(worst).toBeLessThan(1e-12);
    expect(worstInteriorForce).toBeLessThan(1e-9 * largestForce);
  });
});
