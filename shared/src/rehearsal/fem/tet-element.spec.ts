import { describe, expect, it } from 'vitest';
import { lameParameters, LIVER_MATERIAL } from './material';
import { rotationOfDeformation } from './polar-decomposition';
import { restStiffness, shapeGradients, tetRestData } from './tet-element';
import { denseMultiply, rotationMatrix, seededRandom } from './testing/dense';
import { TissueSolver } from './tissue-solver';

/** One tet in mm, positively oriented, deliberately irregular. */
const TET_MM = Float64Array.from([1, 2, 0.5, 11, 1, 0, 3, 9, 1, 2, 3, 8]);
const TET = Uint32Array.from([0, 1, 2, 3]);

function restOfTet() {
  const restM = TET_MM.map((value) => value / 1000);
  const { restInverse, volumes } = tetRestData(restM, TET);
  return { restM, gradients: shapeGradients(restInverse), volume: volumes[0] };
}

describe('linear tetrahedron at rest', () => {
  it('has the volume of the triple product and gradients of the linear shape functions', () => {
    const { restM, gradients, volume } = restOfTet();
    // V = det[x1−x0, x2−x0, x3−x0]/6; here (10, −1, −0.5), (2, 7, 0.5), (1, 1, 7.5) mm.
    const expected =
      ((10 * (7 * 7.5 - 0.5 * 1) + 1 * (2 * 7.5 - 0.5 * 1) - 0.5 * (2 - 7)) * 1e-9) / 6;
    expect(Math.abs(volume / expected - 1)).toBeLessThan(1e-12);
    // ∇N_a·(x_b − x_0) = δ_ab − δ_a0 for linear shape functions: N_a(x_b) = δ_ab.
    for (let a = 0; a < 4; a++) {
      for (let b = 0; b < 4; b++) {
        let value = 1 * (a === 0 ? 1 : 0);
        for (let i = 0; i < 3; i++) value += gradients[3 * a + i] * (restM[3 * b + i] - restM[i]);
        expect(value).toBeCloseTo(a === b ? 1 : 0, 12);
      }
    }
  });

  // Ke = V·Bᵀ·D·B with the Voigt strain-displacement matrix B (engineering shear strains) and
  // the isotropic elasticity matrix D (Zienkiewicz & Taylor, The Finite Element Method, vol. 1,
  // linear elasticity chapter; standard form, from memory).
  it('has the stiffness V·Bᵀ·D·B of the Voigt form, symmetric, with the 6 rigid modes in its kernel', () => {
    const { gradients, volume } = restOfTet();
    const { youngsModulusPa: e, poissonRatio: nu } = LIVER_MATERIAL;
    const { lambdaPa, muPa } = lameParameters(LIVER_MATERIAL);
    const b = new Float64Array(6 * 12);
    for (let a = 0; a < 4; a++) {
      const [gx, gy, gz] = [0, 1, 2].map((i) => gradients[3 * a + i]);
      const rows = [
        [gx, 0, 0],
        [0, gy, 0],
        [0, 0, gz],
        [gy, gx, 0],
        [0, gz, gy],
        [gz, 0, gx],
      ];
      rows.forEach((row, r) => row.forEach((value, c) => (b[12 * r + 3 * a + c] = value)));
    }
    const factor = e / ((1 + nu) * (1 - 2 * nu));
    const d = new Float64Array(36);
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 3; j++) d[6 * i + j] = factor * (i === j ? 1 - nu : nu);
      d[6 * (i + 3) + i + 3] = (factor * (1 - 2 * nu)) / 2;
    }
    const reference = new Float64Array(144);
    for (let r = 0; r < 12; r++) {
      for (let c = 0; c < 12; c++) {
        let sum = 0;
        for (let i = 0; i < 6; i++) {
          for (let j = 0; j < 6; j++) sum += b[12 * i + r] * d[6 * i + j] * b[12 * j + c];
        }
        reference[12 * r + c] = volume * sum;
      }
    }
    const ke = restStiffness(gradients, volume, lambdaPa, muPa);
    const scale = Math.max(...reference.map(Math.abs));
    for (let index = 0; index < 144; index++) {
      expect(Math.abs(ke[index] - reference[index])).toBeLessThan(1e-12 * scale);
      const transposed = 12 * (index % 12) + Math.floor(index / 12);
      expect(Math.abs(ke[index] - ke[transposed])).toBeLessThan(1e-12 * scale);
    }
    // Rigid modes: three translations and three infinitesimal rotations ω × x.
    const { restM } = restOfTet();
    const modes: Float64Array[] = [];
    for (let axis = 0; axis < 3; axis++) {
      modes.push(Float64Array.from({ length: 12 }, (_, dof) => (dof % 3 === axis ? 1 : 0)));
      const w = [0, 0, 0];
      w[axis] = 1;
      const mode = new Float64Array(12);
      for (let a = 0; a < 4; a++) {
        const [x, y, z] = [0, 1, 2].map((i) => restM[3 * a + i]);
        mode[3 * a] = w[1] * z - w[2] * y;
        mode[3 * a + 1] = w[2] * x - w[0] * z;
        mode[3 * a + 2] = w[0] * y - w[1] * x;
      }
      modes.push(mode);
    }
    for (const mode of modes) {
      const modeScale = Math.max(...mode.map(Math.abs));
      for (const value of denseMultiply(ke, mode)) {
        expect(Math.abs(value)).toBeLessThan(1e-10 * scale * modeScale);
      }
    }
  });
});

describe('corotational element force (Müller & Gross, Graphics Interface 2004)', () => {
  it('is f = −R·Ke·(Rᵀ·x − x0), R the rotation of F = Ds·Dm⁻¹, on a deformed and turned tet', () => {
    const random = seededRandom(3);
    const { restM, gradients, volume } = restOfTet();
    const { lambdaPa, muPa } = lameParameters(LIVER_MATERIAL);
    const ke = restStiffness(gradients, volume, lambdaPa, muPa);
    const solver = new TissueSolver({ nodes: TET_MM, tets: TET });
    for (let trial = 0; trial < 20; trial++) {
      const turn = rotationMatrix([random(), random(), random()], 3 * random());
      // Up to ±1 mm of deformation on a ~10 mm tet, then turned and shifted.
      const deformed = restM.map((value) => value + (random() - 0.5) * 2e-3);
      const x = new Float64Array(12);
      for (let a = 0; a < 4; a++) {
        for (let i = 0; i < 3; i++) {
          x[3 * a + i] =
            turn[3 * i] * deformed[3 * a] +
            turn[3 * i + 1] * deformed[3 * a + 1] +
            turn[3 * i + 2] * deformed[3 * a + 2] +
            0.05;
        }
      }
      // F = Σ_a x_a ⊗ ∇N_a, its rotation, and the force of the definition.
      const f = new Float64Array(9);
      for (let a = 0; a < 4; a++) {
        for (let i = 0; i < 3; i++) {
          for (let j = 0; j < 3; j++) f[3 * i + j] += x[3 * a + i] * gradients[3 * a + j];
        }
      }
      const r = new Float64Array(9);
      rotationOfDeformation(f, r);
      const local = new Float64Array(12);
      for (let a = 0; a < 4; a++) {
        for (let i = 0; i < 3; i++) {
          local[3 * a + i] =
            r[i] * x[3 * a] + r[3 + i] * x[3 * a + 1] + r[6 + i] * x[3 * a + 2] - restM[3 * a + i];
        }
      }
      const kLocal = denseMultiply(ke, local);
      const expected = new Float64Array(12);
      for (let a = 0; a < 4; a++) {
        for (let i = 0; i < 3; i++) {
          expected[3 * a + i] = -(
            r[3 * i] * kLocal[3 * a] +
            r[3 * i + 1] * kLocal[3 * a + 1] +
            r[3 * i + 2] * kLocal[3 * a + 2]
          );
        }
      }
      solver.setState({ positionsM: x });
      const actual = new Float64Array(12);
      solver.forces(actual);
      const scale = Math.max(...expected.map(Math.abs));
      expect(scale).toBeGreaterThan(0);
      for (let dof = 0; dof < 12; dof++) {
        expect(Math.abs(actual[dof] - expected[dof])).toBeLessThan(1e-10 * scale);
      }
    }
  });
});
