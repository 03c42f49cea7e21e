import { describe, expect, it } from 'vitest';
import { LIVER_MATERIAL } from './material';
import { blockMesh, nodesOnPlane } from './testing/block-mesh';
import { TissueSolver, type DrivenNode, type FixedNode } from './tissue-solver';

const SIZE_MM = [20, 30, 40] as const;

/**
 * A block pressed along z between frictionless plates: bottom face held in z, top face driven
 * in z, lateral faces free, rigid motion in x and y removed at two bottom corners only.
 */
function compress(strain: number, poissonRatio: number) {
  const mesh = blockMesh([2, 3, 4], SIZE_MM);
  const [nx] = mesh.counts;
  const bottom = nodesOnPlane(mesh, 2, 0);
  const top = nodesOnPlane(mesh, 2, SIZE_MM[2]);
  const fixed: FixedNode[] = bottom.map((node) => ({ node, axes: [2] }));
  fixed.push(
    { node: mesh.nodeAt(0, 0, 0), axes: [0, 1] },
    { node: mesh.nodeAt(nx, 0, 0), axes: [1] },
  );
  const heightM = (SIZE_MM[2] * (1 - strain)) / 1000;
  const driven: DrivenNode[] = top.map((node) => ({
    node,
    axes: [2],
    positionM: () => [0, 0, heightM],
  }));
  const solver = new TissueSolver(mesh, {
    material: { poissonRatio },
    boundary: { fixed, driven },
    relativeTolerance: 1e-12,
  });
  const report = solver.solveStatic({ toleranceM: 1e-14 });
  const forces = new Float64Array(3 * solver.nodeCount);
  solver.forces(forces);
  const sumZ = (nodes: number[]) => nodes.reduce((sum, node) => sum + forces[3 * node + 2], 0);
  return { mesh, solver, report, topForceN: sumZ(top), bottomForceN: sumZ(bottom) };
}

describe('uniaxial compression of a block', () => {
  // Hooke's law for uniaxial stress: σ = E·ε, so the plates carry F = E·A·ε, and the lateral
  // strain is −ν times the axial one (any text on elasticity, e.g. Timoshenko & Goodier,
  // Theory of Elasticity).
  for (const { strain, nu } of [
    { strain: 0.02, nu: LIVER_MATERIAL.poissonRatio },
    { strain: 0.2, nu: 0.3 },
  ]) {
    it(`carries E·A·ε at ε = ${strain}, ν = ${nu}, and contracts by −ν·ε laterally`, () => {
      const { mesh, solver, report, topForceN, bottomForceN } = compress(strain, nu);
      expect(report.converged).toBe(true);
      const areaM2 = (SIZE_MM[0] * SIZE_MM[1]) / 1e6;
      const expected = LIVER_MATERIAL.youngsModulusPa * areaM2 * strain;
      // The body pushes the top plate up and the bottom plate down with E·A·ε.
      expect(Math.abs(topForceN / expected - 1)).toBeLessThan(1e-9);
      expect(Math.abs(-bottomForceN / expected - 1)).toBeLessThan(1e-9);
      // Lateral expansion under compression: x = X·(1 + ν·ε) at the far top corner.
      const corner = mesh.nodeAt(mesh.counts[0], mesh.counts[1], mesh.counts[2]);
      const x = solver.positionsM[3 * corner] / (SIZE_MM[0] / 1000);
      const y = solver.positionsM[3 * corner + 1] / (SIZE_MM[1] / 1000);
      expect(Math.abs(x - (1 + nu * strain))).toBeLessThan(1e-10);
      expect(Math.abs(y - (1 + nu * strain))).toBeLessThan(1e-10);
    });
  }
});
