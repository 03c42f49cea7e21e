import { describe, expect, it } from 'vitest';
import type { TissueMaterial } from './material';
import { blockMesh } from './testing/block-mesh';
import { denseSolve, rotationMatrix, seededRandom } from './testing/dense';
import { denseCorotationalSystem } from './testing/dense-reference';
import { TissueSolver, type BoundaryConditions, type PointM } from './tissue-solver';

const MATERIAL: TissueMaterial = {
  youngsModulusPa: 6000,
  poissonRatio: 0.45,
  densityKgPerM3: 1060,
  massDampingPerS: 0.7,
  stiffnessDampingS: 0.01,
};
const H = 0.02;

/**
 * Baraff & Witkin (SIGGRAPH 1998, eq. 6) in this folder's form, computed densely:
 * (M + h·C + h²·K)·Δv = h·(f(x_n) − C·v_n − h·K·v_n), C = α·M + β·K_elastic,
 * K = Σ R·Ke·Rᵀ + K_attachment, Δv known on fixed and driven degrees of freedom (eliminated),
 * then v += Δv and x += h·v.
 */
function denseStep(
  restM: Float64Array,
  tets: Uint32Array,
  x: Float64Array,
  v: Float64Array,
  t1: number,
  attachment: { node: number; k: number; target: (t: number) => PointM },
  driven: { node: number; axes: number[]; position: (t: number) => PointM },
  fixedDofs: number[],
  external: Float64Array,
) {
  const n = x.length;
  const { stiffness: k, forces, masses: mass } = denseCorotationalSystem(restM, tets, x, MATERIAL);
  const force = forces.map((value, dof) => value + external[dof]);
  const kAttach = new Float64Array(n);
  const target = attachment.target(t1);
  for (let i = 0; i < 3; i++) {
    const dof = 3 * attachment.node + i;
    kAttach[dof] = attachment.k;
    force[dof] += attachment.k * (target[i] - x[dof]);
  }
  const { massDampingPerS: alpha, stiffnessDampingS: beta } = MATERIAL;
  const a = new Float64Array(n * n);
  const b = new Float64Array(n);
  for (let row = 0; row < n; row++) {
    let cv = alpha * mass[row] * v[row];
    let kv = kAttach[row] * v[row];
    for (let col = 0; col < n; col++) {
      const kij = k[n * row + col];
      cv += beta * kij * v[col];
      kv += kij * v[col];
      a[n * row + col] = (H * beta + H * H) * kij;
    }
    a[n * row + row] += (1 + H * alpha) * mass[row] + H * H * kAttach[row];
    b[row] = H * (force[row] - cv - H * kv);
  }
  const known = new Map<number, number>();
  for (const dof of fixedDofs) known.set(dof, -v[dof]);
  const p = driven.position(t1);
  for (const axis of driven.axes) {
    const dof = 3 * driven.node + axis;
    known.set(dof, (p[axis] - x[dof]) / H - v[dof]);
  }
  const free = [...Array(n).keys()].filter((dof) => !known.has(dof));
  const reduced = new Float64Array(free.length * free.length);
  const rhs = new Float64Array(free.length);
  free.forEach((row, r) => {
    rhs[r] = b[row];
    for (const [dof, dv] of known) rhs[r] -= a[n * row + dof] * dv;
    free.forEach((col, c) => (reduced[free.length * r + c] = a[n * row + col]));
  });
  const dvFree = denseSolve(reduced, rhs);
  const dv = new Float64Array(n);
  free.forEach((dof, r) => (dv[dof] = dvFree[r]));
  for (const [dof, value] of known) dv[dof] = value;
  const v1 = v.map((value, dof) => value + dv[dof]);
  const x1 = x.map((value, dof) => value + H * v1[dof]);
  return { x1, v1 };
}

describe('implicit step (Baraff & Witkin, SIGGRAPH 1998)', () => {
  it('matches a dense computation of the linearised backward Euler step with every boundary kind', () => {
    const mesh = blockMesh([1, 1, 2], [10, 12, 20]);
    const restM = mesh.nodes.map((value) => value / 1000);
    const random = seededRandom(17);
    const turn = rotationMatrix([0.3, -0.5, 0.8], 0.7);
    const x = new Float64Array(restM.length);
    const v = new Float64Array(restM.length);
    for (let node = 0; node < restM.length / 3; node++) {
      for (let i = 0; i < 3; i++) {
        x[3 * node + i] =
          turn[3 * i] * restM[3 * node] +
          turn[3 * i + 1] * restM[3 * node + 1] +
          turn[3 * i + 2] * restM[3 * node + 2] +
          (random() - 0.5) * 2e-3;
        v[3 * node + i] = (random() - 0.5) * 0.02;
      }
    }
    const last = restM.length / 3 - 1;
    const start = x.slice(3 * last, 3 * last + 3);
    const driven = {
      node: last,
      axes: [0, 2],
      position: (t: number): PointM => [start[0] + 0.003 * Math.sin(4 * t), 0, start[2] - 0.01 * t],
    };
    const attachment = {
      node: 3,
      k: 0.8,
      target: (t: number): PointM => [0.004 + 0.01 * t, 0.011, 0.002],
    };
    const external = new Float64Array(restM.length);
    external[3 * 5 + 2] = -2e-3;
    external[3 * 6] = 1e-3;
    const boundary: BoundaryConditions = {
      fixed: [{ node: 0 }, { node: 1, axes: [1] }],
      driven: [{ node: driven.node, positionM: driven.position, axes: [0, 2] }],
      attachments: [
        { node: attachment.node, stiffnessNPerM: attachment.k, targetM: attachment.target },
      ],
    };
    const solver = new TissueSolver(mesh, {
      material: MATERIAL,
      timeStepS: H,
      boundary,
      relativeTolerance: 1e-13,
    });
    solver.setState({ positionsM: x, velocitiesMPerS: v, timeS: 0.3 });
    solver.setExternalForces(external);
    const report = solver.freeMotion();
    expect(report.solve.converged).toBe(true);
    const reference = denseStep(
      restM,
      mesh.tets,
      x,
      v,
      0.3 + H,
      attachment,
      driven,
      [0, 1, 2, 4],
      external,
    );
    const vScale = Math.max(...reference.v1.map(Math.abs));
    for (let dof = 0; dof < x.length; dof++) {
      expect(Math.abs(solver.velocitiesMPerS[dof] - reference.v1[dof])).toBeLessThan(1e-9 * vScale);
      expect(Math.abs(solver.positionsM[dof] - reference.x1[dof])).toBeLessThan(1e-9 * H * vScale);
    }
    // The step did something beyond the free flight x + h·v.
    const drift = Math.max(...reference.v1.map((value, dof) => Math.abs(value - v[dof])));
    expect(drift).toBeGreaterThan(0.01 * vScale);
  });
});
