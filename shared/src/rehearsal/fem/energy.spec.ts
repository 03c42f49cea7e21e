import { describe, expect, it } from 'vitest';
import { lameParameters } from './material';
import { blockMesh } from './testing/block-mesh';
import { TissueSolver, type SoftAttachment } from './tissue-solver';

const UNDAMPED = { massDampingPerS: 0, stiffnessDampingS: 0 };

describe('energy of backward Euler', () => {
  // Backward Euler is A-stable and dissipative: on an undamped linear oscillator it shrinks
  // the energy by 1/(1 + ω²h²) each step (Hairer & Wanner, Solving Ordinary Differential
  // Equations II, on A-stability — from memory; the factor follows in two lines from the
  // scheme). So in a free undamped run the total energy must never grow.
  for (const timeStepS of [0.01, 0.05]) {
    it(`never grows in a free undamped run from a 20 % stretch (h = ${timeStepS * 1000} ms)`, () => {
      const mesh = blockMesh([4, 3, 3], [80, 60, 60]);
      const solver = new TissueSolver(mesh, {
        timeStepS,
        material: UNDAMPED,
        relativeTolerance: 1e-10,
      });
      const stretched = solver.restPositionsM.map((value, dof) =>
        dof % 3 === 0 ? 0.04 + (value - 0.04) * 1.2 : value,
      );
      solver.setState({ positionsM: stretched });
      const total = () => {
        const energy = solver.energy();
        return energy.kineticJ + energy.elasticJ;
      };
      const start = total();
      // A 20 % stretch along x with no lateral contraction (uniaxial strain) stores
      // ½·(λ + 2μ)·ε²·V, 0.1311 J in this 80 × 60 × 60 mm block.
      const { lambdaPa, muPa } = lameParameters(solver.material);
      const expected = 0.5 * (lambdaPa + 2 * muPa) * 0.2 ** 2 * (0.08 * 0.06 * 0.06);
      expect(Math.abs(start / expected - 1)).toBeLessThan(1e-12);
      let previous = start;
      let momentum = 0;
      for (let step = 0; step < 100; step++) {
        expect(solver.step().solve.converged).toBe(true);
        const now = total();
        expect(now).toBeLessThanOrEqual(previous + 1e-11 * start);
        previous = now;
        // Internal forces add up to zero: momentum stays zero in a free body.
        for (let axis = 0; axis < 3; axis++) {
          let sum = 0;
          for (let node = 0; node < solver.nodeCount; node++) {
            sum += solver.massKg[node] * solver.velocitiesMPerS[3 * node + axis];
          }
          momentum = Math.max(momentum, Math.abs(sum));
        }
      }
      expect(previous).toBeLessThan(0.5 * start);
      expect(momentum).toBeLessThan(1e-12);
    });
  }

  /**
   * A block on zero-length springs k_i = ω²·m_i to its rest positions: every node is the same
   * oscillator ω, and a uniform translation is an exact mode (elastic forces vanish for it).
   */
  function oscillator(omega: number, alpha: number, timeStepS: number) {
    const mesh = blockMesh([2, 2, 2], [20, 20, 20]);
    const probe = new TissueSolver(mesh);
    const attachments: SoftAttachment[] = [];
    for (let node = 0; node < probe.nodeCount; node++) {
      const rest = probe.restPositionsM;
      attachments.push({
        node,
        stiffnessNPerM: omega * omega * probe.massKg[node],
        targetM: [rest[3 * node], rest[3 * node + 1], rest[3 * node + 2]],
      });
    }
    const solver = new TissueSolver(mesh, {
      timeStepS,
      material: { massDampingPerS: alpha, stiffnessDampingS: 0.01 },
      boundary: { attachments },
      relativeTolerance: 1e-12,
    });
    const shift = [0.002, -0.001, 0.0005];
    const speed = [0.01, 0.02, -0.01];
    solver.setState({
      positionsM: solver.restPositionsM.map((value, dof) => value + shift[dof % 3]),
      velocitiesMPerS: solver.restPositionsM.map((_, dof) => speed[dof % 3]),
    });
    return { solver, shift, speed };
  }

  it('shrinks the energy of an undamped oscillator by exactly 1/(1 + ω²h²) per step', () => {
    const omega = 12;
    const h = 0.02;
    const { solver } = oscillator(omega, 0, h);
    const total = () => {
      const energy = solver.energy();
      return energy.kineticJ + energy.elasticJ + energy.attachmentJ;
    };
    const start = total();
    for (let step = 1; step <= 50; step++) {
      solver.step();
      const expected = start / (1 + omega * omega * h * h) ** step;
      expect(Math.abs(total() / expected - 1)).toBeLessThan(1e-9);
    }
    expect(solver.energy().elasticJ).toBeLessThan(1e-20);
  });

  it('follows the backward Euler recursion of x″ = −ω²x − α·x′ (Rayleigh mass damping)', () => {
    const omega = 9;
    const alpha = 3;
    const h = 0.03;
    const { solver, shift, speed } = oscillator(omega, alpha, h);
    // v₊ = v + h·(−ω²·x₊ − α·v₊), x₊ = x + h·v₊  ⇒  v₊ = (v − h·ω²·x)/(1 + h·α + h²·ω²).
    const x = [...shift];
    const v = [...speed];
    for (let step = 0; step < 40; step++) {
      solver.step();
      for (let axis = 0; axis < 3; axis++) {
        v[axis] = (v[axis] - h * omega * omega * x[axis]) / (1 + h * alpha + h * h * omega * omega);
        x[axis] += h * v[axis];
      }
      for (let node = 0; node < solver.nodeCount; node++) {
        for (let axis = 0; axis < 3; axis++) {
          const dof = 3 * node + axis;
          const displacement = solver.positionsM[dof] - solver.restPositionsM[dof];
          expect(Math.abs(displacement - x[axis])).toBeLessThan(1e-12);
          expect(Math.abs(solver.velocitiesMPerS[dof] - v[axis])).toBeLessThan(1e-10);
        }
      }
    }
  });
});
