import { describe, expect, it } from 'vitest';
import { lameParameters, LIVER_MATERIAL } from './material';
import { blockMesh, nodesOnPlane } from './testing/block-mesh';
import { rotationMatrix } from './testing/dense';
import { TissueSolver } from './tissue-solver';

const SIZE_MM = [20, 30, 40] as const;
const ANGLE_RAD = Math.PI / 3;

/** Positions of the block turned by 60° about z through `pivot` (m), after a map of the rest. */
function turned(
  restM: Float64Array,
  map: (x: number[]) => number[] = (x) => x,
  axis: readonly number[] = [0, 0, 1],
): Float64Array {
  const rotation = rotationMatrix(axis, ANGLE_RAD);
  const pivot = [0.01, 0.015, 0.02];
  const out = new Float64Array(restM.length);
  for (let node = 0; node < restM.length / 3; node++) {
    const local = map([0, 1, 2].map((i) => restM[3 * node + i])).map(
      (value, i) => value - pivot[i],
    );
    for (let i = 0; i < 3; i++) {
      out[3 * node + i] =
        pivot[i] +
        rotation[3 * i] * local[0] +
        rotation[3 * i + 1] * local[1] +
        rotation[3 * i + 2] * local[2];
    }
  }
  return out;
}

function forcesAt(solver: TissueSolver, positionsM: Float64Array): Float64Array {
  solver.setState({ positionsM });
  const out = new Float64Array(positionsM.length);
  solver.forces(out);
  return out;
}

const maxAbs = (values: Float64Array) =>
  values.reduce((worst, v) => Math.max(worst, Math.abs(v)), 0);

describe('corotation (Müller & Gross, Graphics Interface 2004)', () => {
  const mesh = blockMesh([2, 3, 4], SIZE_MM);
  const corotational = new TissueSolver(mesh);
  const linear = new TissueSolver(mesh, { rotation: 'linear' });
  // Force scale: the plates' force of a 1 % uniaxial strain on the block's 20 × 30 mm face.
  const onePercentN = LIVER_MATERIAL.youngsModulusPa * (20 * 30 * 1e-6) * 0.01;

  it('gives no elastic force for a rigid 60° rotation, where linear elasticity gives large ones', () => {
    const rigid = turned(corotational.restPositionsM);
    expect(maxAbs(forcesAt(corotational, rigid))).toBeLessThan(1e-12 * onePercentN);
    expect(corotational.energy().elasticJ).toBeLessThan(1e-18);
    const ghost = forcesAt(linear, rigid);
    // Linear strain of a rotation: ε = sym(R − I) = (cos 60° − 1)·(I − e_z e_zᵀ) = −½ in x and
    // y, a uniform "compression", so σ_xx = 2(λ + μ)·(cos 60° − 1), σ_xy = 0. The linear model's
    // nodal forces of a uniform stress add up over a face to −σ·n·A with the rest normal n: the
    // nodes of the x = 20 mm face carry −σ_xx·A along the global x axis, whatever the turn.
    const { lambdaPa, muPa } = lameParameters(LIVER_MATERIAL);
    const sigmaXX = 2 * (lambdaPa + muPa) * (Math.cos(ANGLE_RAD) - 1);
    const face = nodesOnPlane(mesh, 0, SIZE_MM[0]);
    let fx = 0;
    let fy = 0;
    for (const node of face) {
      fx += ghost[3 * node];
      fy += ghost[3 * node + 1];
    }
    const expected = -sigmaXX * (SIZE_MM[1] * SIZE_MM[2] * 1e-6);
    expect(Math.abs(fx / expected - 1)).toBeLessThan(1e-9);
    expect(Math.abs(fy)).toBeLessThan(1e-9 * expected);
    // Several times the force of a real 1 % strain: a body that only turned.
    expect(maxAbs(ghost)).toBeGreaterThan((3 * onePercentN) / face.length);
  });

  it('turns the forces of a deformed body with it: f(R·x) = R·f(x) (objectivity)', () => {
    // 3 % stretch along x with a shear, then turned by 60° about an oblique axis.
    const deform = (x: number[]) => [1.03 * x[0] + 0.02 * x[2], 0.99 * x[1], x[2] + 0.01 * x[1]];
    const axis = [1, 2, 2];
    const deformed = turned(corotational.restPositionsM, deform, [0, 0, 1]);
    const both = turned(deformed, (x) => x, axis);
    const f1 = forcesAt(corotational, deformed);
    const f2 = forcesAt(corotational, both);
    const rotation = rotationMatrix(axis, ANGLE_RAD);
    const scale = maxAbs(f1);
    expect(scale).toBeGreaterThan((0.1 * onePercentN) / 10);
    for (let node = 0; node < f1.length / 3; node++) {
      for (let i = 0; i < 3; i++) {
        const expected =
          rotation[3 * i] * f1[3 * node] +
          rotation[3 * i + 1] * f1[3 * node + 1] +
          rotation[3 * i + 2] * f1[3 * node + 2];
        expect(Math.abs(f2[3 * node + i] - expected)).toBeLessThan(1e-10 * scale);
      }
    }
    // The linear model does not turn them: its answer differs by far more.
    const l1 = forcesAt(linear, deformed);
    const l2 = forcesAt(linear, both);
    let worst = 0;
    for (let node = 0; node < l1.length / 3; node++) {
      for (let i = 0; i < 3; i++) {
        const expected =
          rotation[3 * i] * l1[3 * node] +
          rotation[3 * i + 1] * l1[3 * node + 1] +
          rotation[3 * i + 2] * l1[3 * node + 2];
        worst = Math.max(worst, Math.abs(l2[3 * node + i] - expected));
      }
    }
    expect(worst).toBeGreaterThan(scale);
  });
});
