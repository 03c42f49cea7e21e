import { describe, expect, it } from 'vitest';
import { FemInputError } from './fem-errors';
import { LIVER_MATERIAL } from './material';
import { blockMesh, faceNodeAreasMm2, nodesOnPlane } from './testing/block-mesh';
import { denseSolve, rotationMatrix, seededRandom } from './testing/dense';
import { denseCorotationalSystem } from './testing/dense-reference';
import { TissueSolver, type FixedNode, type PointM } from './tissue-solver';

const H = 0.02;

/** Gravity along −z on every node, N. */
function gravity(solver: TissueSolver): Float64Array {
  const forces = new Float64Array(3 * solver.nodeCount);
  for (let node = 0; node < solver.nodeCount; node++)
    forces[3 * node + 2] = -9.81 * solver.massKg[node];
  return forces;
}

describe('conjugate gradients on the step system', () => {
  // Conjugate gradients on a symmetric positive definite system (Hestenes & Stiefel 1952)
  // reach any residual; checked here against Gaussian elimination of the same reduced system
  // A_ff = (M + h·C + h²·K)_ff assembled densely from the definitions.
  for (const [preconditioner, relativeTolerance] of [
    ['incomplete-cholesky', 1e-6],
    ['incomplete-cholesky', 1e-12],
    ['jacobi', 1e-6],
    ['jacobi', 1e-12],
  ] as const) {
    it(`solveSystem meets the relative tolerance ${relativeTolerance} (${preconditioner})`, () => {
      const mesh = blockMesh([2, 2, 3], [20, 20, 30]);
      const fixed = nodesOnPlane(mesh, 2, 0).map((node) => ({ node }));
      const solver = new TissueSolver(mesh, {
        timeStepS: H,
        boundary: { fixed },
        relativeTolerance,
        preconditioner,
      });
      const random = seededRandom(99);
      const turn = rotationMatrix([1, 1, 0], 0.5);
      const x = new Float64Array(solver.restPositionsM.length);
      for (let dof = 0; dof < x.length; dof++) {
        const node = Math.floor(dof / 3);
        const i = dof % 3;
        const rest = solver.restPositionsM;
        x[dof] =
          turn[3 * i] * rest[3 * node] +
          turn[3 * i + 1] * rest[3 * node + 1] +
          turn[3 * i + 2] * rest[3 * node + 2] +
          (random() - 0.5) * 1e-3;
      }
      solver.setState({ positionsM: x });
      expect(() =>
        solver.solveSystem(new Float64Array(x.length), new Float64Array(x.length)),
      ).toThrow(FemInputError);
      solver.freeMotion();
      const rhs = x.map(() => random() - 0.5);
      const out = new Float64Array(x.length);
      const report = solver.solveSystem(rhs, out);
      expect(report.converged).toBe(true);
      expect(report.relativeResidual).toBeLessThanOrEqual(relativeTolerance);
      expect(report.iterations).toBeLessThan(x.length);

      const { stiffness, masses } = denseCorotationalSystem(
        solver.restPositionsM,
        mesh.tets,
        x,
        LIVER_MATERIAL,
      );
      const { massDampingPerS: alpha, stiffnessDampingS: beta } = LIVER_MATERIAL;
      const constrained = solver.constrainedDofs();
      const free = [...Array(x.length).keys()].filter((dof) => constrained[dof] === 0);
      const n = x.length;
      const reduced = new Float64Array(free.length ** 2);
      free.forEach((row, r) =>
        free.forEach((col, c) => {
          reduced[free.length * r + c] =
            (H * beta + H * H) * stiffness[n * row + col] +
            (row === col ? (1 + H * alpha) * masses[row] : 0);
        }),
      );
      // True residual of the solver's answer, and its distance to the exact solution.
      let residual = 0;
      let norm = 0;
      free.forEach((row, r) => {
        let sum = rhs[row];
        free.forEach((col, c) => (sum -= reduced[free.length * r + c] * out[col]));
        residual += sum * sum;
        norm += rhs[row] ** 2;
      });
      expect(Math.sqrt(residual / norm)).toBeLessThan(1.01 * relativeTolerance);
      const exact = denseSolve(reduced, Float64Array.from(free.map((dof) => rhs[dof])));
      const scale = Math.max(...exact.map(Math.abs));
      const error = Math.max(...free.map((dof, r) => Math.abs(out[dof] - exact[r])));
      expect(error).toBeLessThan(relativeTolerance * 1e3 * scale);
      for (let dof = 0; dof < n; dof++) if (constrained[dof]) expect(out[dof]).toBe(0);
    });
  }
});

describe('boundary conditions', () => {
  it('keeps fixed nodes exactly in place (and roller nodes on their plane) under gravity', () => {
    const mesh = blockMesh([2, 2, 4], [20, 20, 40]);
    const bottom = nodesOnPlane(mesh, 2, 0);
    const side = nodesOnPlane(mesh, 0, 20).filter((node) => !bottom.includes(node));
    const fixed: FixedNode[] = [
      ...bottom.map((node) => ({ node })),
      ...side.map((node) => ({ node, axes: [0] as const })),
    ];
    const solver = new TissueSolver(mesh, { timeStepS: H, boundary: { fixed } });
    solver.setExternalForces(gravity(solver));
    const start = solver.positionsM.slice();
    for (let step = 0; step < 30; step++) solver.step();
    for (const node of bottom) {
      for (let axis = 0; axis < 3; axis++) {
        expect(solver.positionsM[3 * node + axis]).toBe(start[3 * node + axis]);
        expect(solver.velocitiesMPerS[3 * node + axis]).toBe(0);
      }
    }
    for (const node of side) expect(solver.positionsM[3 * node]).toBe(start[3 * node]);
    // The rest sagged: the top moved down by more than a micrometre.
    const top = mesh.nodeAt(1, 1, 4);
    expect(start[3 * top + 2] - solver.positionsM[3 * top + 2]).toBeGreaterThan(1e-6);
  });

  it('moves a driven node exactly along its prescribed function of time', () => {
    const mesh = blockMesh([2, 2, 4], [20, 20, 40]);
    const bottom = nodesOnPlane(mesh, 2, 0).map((node) => ({ node }));
    const tip = mesh.nodeAt(1, 1, 4);
    // 10 mm breathing-like excursion along z, 4 s period, and a 2 mm drift in y on top.
    const path = (t: number): PointM => [
      0.01,
      0.01 + 0.002 * t,
      0.04 + 0.01 * Math.sin((2 * Math.PI * t) / 4),
    ];
    const solver = new TissueSolver(mesh, {
      timeStepS: H,
      boundary: { fixed: bottom, driven: [{ node: tip, positionM: path }] },
    });
    for (let step = 1; step <= 60; step++) {
      const report = solver.step();
      expect(report.timeS).toBeCloseTo(step * H, 12);
      const expected = path(solver.timeS);
      for (let axis = 0; axis < 3; axis++) {
        expect(solver.positionsM[3 * tip + axis]).toBe(expected[axis]);
      }
    }
    // Its neighbours follow it part of the way.
    const neighbour = mesh.nodeAt(1, 1, 3);
    expect(
      solver.positionsM[3 * neighbour + 2] - solver.restPositionsM[3 * neighbour + 2],
    ).toBeGreaterThan(1e-4);
  });

  // A bar (E, A, L) in series with a spring k: the end moves by d·k/(k + E·A/L) when the
  // spring's far end is pulled by d (springs in series). ν = 0 keeps the bar uniaxial under
  // zero-length springs that also hold the end laterally. The springs are spread over the end
  // face in proportion to its consistent nodal areas, so that a uniform stretch balances them
  // node by node.
  for (const springOverBar of [0.5, 2]) {
    it(`soft attachments: bar and spring in series, k = ${springOverBar}·E·A/L`, () => {
      const size = [20, 20, 50] as const;
      const mesh = blockMesh([2, 2, 5], size);
      const bottom = nodesOnPlane(mesh, 2, 0);
      const fixed: FixedNode[] = bottom.map((node) => ({ node, axes: [2] }));
      fixed.push(
        { node: mesh.nodeAt(0, 0, 0), axes: [0, 1] },
        { node: mesh.nodeAt(2, 0, 0), axes: [1] },
      );
      const youngsModulusPa = LIVER_MATERIAL.youngsModulusPa;
      const areaM2 = (size[0] * size[1]) / 1e6;
      const lengthM = size[2] / 1000;
      const barNPerM = (youngsModulusPa * areaM2) / lengthM;
      const springNPerM = springOverBar * barNPerM;
      const pullM = 0.004;
      const areas = faceNodeAreasMm2(mesh, 2, size[2]);
      const totalMm2 = [...areas.values()].reduce((sum, area) => sum + area, 0);
      const attachments = [...areas].map(([node, area]) => ({
        node,
        stiffnessNPerM: (springNPerM * area) / totalMm2,
        targetM: [
          mesh.nodes[3 * node] / 1000,
          mesh.nodes[3 * node + 1] / 1000,
          lengthM + pullM,
        ] as PointM,
      }));
      const solver = new TissueSolver(mesh, {
        material: { poissonRatio: 0 },
        boundary: { fixed, attachments },
        relativeTolerance: 1e-12,
      });
      expect(solver.solveStatic({ toleranceM: 1e-14 }).converged).toBe(true);
      const expected = (pullM * springNPerM) / (springNPerM + barNPerM);
      for (const node of areas.keys()) {
        const moved = solver.positionsM[3 * node + 2] - solver.restPositionsM[3 * node + 2];
        expect(Math.abs(moved / expected - 1)).toBeLessThan(1e-9);
      }
      // The stretched bar pulls its bottom face up with E·A·u/L, which the support holds.
      const forces = new Float64Array(3 * solver.nodeCount);
      solver.forces(forces);
      const pullOnSupportN = bottom.reduce((sum, node) => sum + forces[3 * node + 2], 0);
      expect(Math.abs(pullOnSupportN / (barNPerM * expected) - 1)).toBeLessThan(1e-9);
    });
  }

  it('a step with force f_c equals free motion plus applyCorrection(solveSystem(h·f_c))', () => {
    const mesh = blockMesh([2, 2, 3], [20, 20, 30]);
    const fixed = nodesOnPlane(mesh, 2, 0).map((node) => ({ node }));
    const top = mesh.nodeAt(1, 1, 3);
    const driven = [
      { node: mesh.nodeAt(0, 0, 3), positionM: (t: number): PointM => [0, 0.001 * t, 0.03] },
    ];
    const options = { timeStepS: H, boundary: { fixed, driven }, relativeTolerance: 1e-12 };
    const withForce = new TissueSolver(mesh, options);
    const corrected = new TissueSolver(mesh, options);
    for (const solver of [withForce, corrected]) {
      solver.setExternalForces(gravity(solver));
      for (let step = 0; step < 5; step++) solver.step();
    }
    // A needle-like pull of 5 mN on one node, plus the same gravity as before.
    const pull = new Float64Array(3 * withForce.nodeCount);
    pull[3 * top] = 0.005;
    pull[3 * top + 2] = -0.002;
    withForce.setExternalForces(gravity(withForce).map((value, dof) => value + pull[dof]));
    withForce.freeMotion();
    corrected.freeMotion();
    const dv = new Float64Array(pull.length);
    const report = corrected.solveSystem(
      pull.map((value) => H * value),
      dv,
    );
    expect(report.converged).toBe(true);
    corrected.applyCorrection(dv);
    const moved = Math.abs(
      withForce.positionsM[3 * top] - corrected.positionsM[3 * top] + H * dv[3 * top],
    );
    expect(moved).toBeGreaterThan(0);
    for (let dof = 0; dof < pull.length; dof++) {
      expect(Math.abs(withForce.positionsM[dof] - corrected.positionsM[dof])).toBeLessThan(1e-13);
      expect(
        Math.abs(withForce.velocitiesMPerS[dof] - corrected.velocitiesMPerS[dof]),
      ).toBeLessThan(1e-11);
    }
  });
});

describe('bad input', () => {
  const mesh = blockMesh([1, 1, 1], [10, 10, 10]);

  it('refuses inverted or flat tetrahedra, bad indices, and nodes outside every tet', () => {
    const flipped = mesh.tets.slice();
    [flipped[1], flipped[2]] = [flipped[2], flipped[1]];
    expect(() => new TissueSolver({ nodes: mesh.nodes, tets: flipped })).toThrow(
      /negatively oriented/,
    );
    const outOfRange = mesh.tets.slice();
    outOfRange[5] = 99;
    expect(() => new TissueSolver({ nodes: mesh.nodes, tets: outOfRange })).toThrow(/node 99/);
    const extra = Float64Array.from([...mesh.nodes, 50, 50, 50]);
    expect(() => new TissueSolver({ nodes: extra, tets: mesh.tets })).toThrow(/no tetrahedron/);
  });

  it('refuses materials out of range and conflicting boundary conditions', () => {
    expect(() => new TissueSolver(mesh, { material: { poissonRatio: 0.5 } })).toThrow(
      FemInputError,
    );
    expect(() => new TissueSolver(mesh, { material: { youngsModulusPa: -1 } })).toThrow(
      FemInputError,
    );
    expect(() => new TissueSolver(mesh, { timeStepS: 0 })).toThrow(FemInputError);
    const both = {
      fixed: [{ node: 0 }],
      driven: [{ node: 0, axes: [2] as const, positionM: (): PointM => [0, 0, 0] }],
    };
    expect(() => new TissueSolver(mesh, { boundary: both })).toThrow(/both fixed and driven/);
    expect(() => new TissueSolver(mesh, { boundary: { fixed: [{ node: 8 }] } })).toThrow(/node 8/);
    expect(() => new TissueSolver(mesh).solveStatic()).toThrow(/supports/);
  });

  it('keeps the state when a driven position turns non-finite mid-run', () => {
    const solver = new TissueSolver(mesh, {
      boundary: {
        fixed: [{ node: 0 }],
        driven: [
          { node: 7, positionM: (t): PointM => [0.01, 0.01, t > 0.07 ? NaN : 0.01 + t / 100] },
        ],
      },
    });
    solver.step();
    solver.step();
    const before = solver.positionsM.slice();
    const time = solver.timeS;
    solver.step();
    expect(() => solver.step()).toThrow(/no finite position/);
    expect(solver.timeS).toBeCloseTo(time + H, 12);
    expect(solver.positionsM.some((value, dof) => value !== before[dof])).toBe(true);
    const after = solver.positionsM.slice();
    expect(() => solver.step()).toThrow(FemInputError);
    expect(Array.from(solver.positionsM)).toEqual(Array.from(after));
    // A static solve that meets the bad position puts everything back too.
    solver.setState({ timeS: 1 });
    expect(() => solver.solveStatic()).toThrow(/no finite position/);
    expect(Array.from(solver.positionsM)).toEqual(Array.from(after));
    expect(() => solver.solveStatic({ toleranceM: 0 })).toThrow(FemInputError);
  });
});
