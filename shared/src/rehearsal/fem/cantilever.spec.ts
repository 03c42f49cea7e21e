import { describe, expect, it } from 'vitest';
import { blockMesh, faceNodeAreasMm2, nodesOnPlane } from './testing/block-mesh';
import { TissueSolver } from './tissue-solver';

const LENGTH_MM = 100;
const SIDE_MM = 10;
const YOUNGS_PA = 6000;

/**
 * Tip deflection of a cantilever (clamped at x = 0, square section) under an end load P spread
 * over the tip face as a uniform shear traction, meshed with 5n × n × n cells.
 */
function tipDeflectionM(n: number, loadN: number, poissonRatio: number): number {
  const mesh = blockMesh([5 * n, n, n], [LENGTH_MM, SIDE_MM, SIDE_MM]);
  const fixed = nodesOnPlane(mesh, 0, 0).map((node) => ({ node }));
  const solver = new TissueSolver(mesh, {
    material: { youngsModulusPa: YOUNGS_PA, poissonRatio },
    boundary: { fixed },
    relativeTolerance: 1e-10,
    maxIterations: 20000,
  });
  const areas = faceNodeAreasMm2(mesh, 0, LENGTH_MM);
  const faceArea = [...areas.values()].reduce((sum, area) => sum + area, 0);
  const load = new Float64Array(3 * solver.nodeCount);
  for (const [node, area] of areas) load[3 * node + 2] = (-loadN * area) / faceArea;
  solver.setExternalForces(load);
  const report = solver.solveStatic({ toleranceM: 1e-13 });
  expect(report.converged).toBe(true);
  // Mean deflection of the tip face (the same consistent weights as the load).
  let deflection = 0;
  for (const [node, area] of areas) {
    deflection +=
      ((solver.restPositionsM[3 * node + 2] - solver.positionsM[3 * node + 2]) * area) / faceArea;
  }
  return deflection;
}

describe('cantilever under an end load', () => {
  // Euler–Bernoulli: δ = P·L³/(3·E·I), I = b·h³/12 (e.g. Gere & Timoshenko, Mechanics of
  // Materials). L/h = 10, so shear (Timoshenko) adds under 1 %. Linear tetrahedra are too stiff
  // in bending (common knowledge in FEM), so the tip deflection must approach δ from below as
  // the mesh is refined. The load gives δ = L/1000: linear theory holds.
  it('approaches P·L³/(3·E·I) from below, the error falling at each of 3 refinements (ν = 0.3)', () => {
    const lengthM = LENGTH_MM / 1000;
    const inertiaM4 = (SIDE_MM / 1000) ** 4 / 12;
    const expectedM = lengthM / 1000;
    const loadN = (expectedM * 3 * YOUNGS_PA * inertiaM4) / lengthM ** 3;
    const errors = [1, 2, 4, 8].map((n) => 1 - tipDeflectionM(n, loadN, 0.3) / expectedM);
    for (let level = 1; level < errors.length; level++) {
      expect(errors[level]).toBeGreaterThan(-0.01);
      // Each halving of the cell size removes at least a fifth of the error.
      expect(errors[level]).toBeLessThan(0.8 * errors[level - 1]);
    }
    // 8 cells through the thickness: within 15 % (11 % when written).
    expect(errors[3]).toBeLessThan(0.15);
  }, 60_000);
});
