import { describe, expect, it } from 'vitest';
import type { ZoneTableRow } from '../api/applicator-profiles';
import { judgeCalibration } from '../assessment/physics-acceptance';
import { calibrateApplicatorProfile, CALIBRATION_MODEL_VERSION } from './calibration';
import { CalibrationModel, type ParameterVector } from './calibration-model';
import { couplingEfficiencyAt, type HeatingParameters } from './heating-parameters';
import { homogeneousZoneSizes } from './homogeneous-zone';
import { BioheatAbortedError } from './pennes-solver';

const ACTIVE_LENGTH_MM = 20;
/** Calibrations run a few dozen simulations: seconds, not milliseconds. */
const SLOW = { timeout: 120_000 };

/** Known heating the self-made table is written with: none of the fit's start values. */
const TRUTH: HeatingParameters = {
  couplingEfficiency: 0.35,
  powerExponent: 0.5,
  referencePowerW: Math.sqrt(40 * 80),
  heatingLengthMm: 14,
  segmentOffsetMm: 2,
};
const HEATINGS = [
  { powerW: 40, timeS: 300 },
  { powerW: 40, timeS: 600 },
  { powerW: 80, timeS: 300 },
  { powerW: 80, timeS: 600 },
];

/**
 * A zone table written by the model itself with the heating `TRUTH`, the segment offset
 * simulated (not added afterwards as the calibration does), each row on its own.
 */
const modelTable: ZoneTableRow[] = HEATINGS.map((heating) => {
  const [size] = homogeneousZoneSizes(
    TRUTH.heatingLengthMm,
    [heating],
    couplingEfficiencyAt(TRUTH, heating.powerW),
    { segmentOffsetMm: TRUTH.segmentOffsetMm },
  );
  return {
    ...heating,
    zoneLengthMm: size.lengthMm,
    zoneWidthMm: size.widthMm,
    tipOffsetMm: size.tipOffsetMm ?? 0,
  };
});

const rowErrors = (row: { lengthMm: number; widthMm: number; tipOffsetMm: number }) => [
  row.lengthMm,
  row.widthMm,
  row.tipOffsetMm,
];

describe('calibration to a table the model wrote itself (self-consistency)', () => {
  it('recovers the four parameters, with residuals and leave-one-out errors near 0', SLOW, () => {
    const calibration = calibrateApplicatorProfile({
      activeLengthMm: ACTIVE_LENGTH_MM,
      zoneTable: modelTable,
    });
    const fitted = calibration.parameters;
    expect(fitted.referencePowerW).toBeCloseTo(TRUTH.referencePowerW, 9);
    expect(Math.abs(fitted.couplingEfficiency / TRUTH.couplingEfficiency - 1)).toBeLessThan(0.02);
    expect(Math.abs(fitted.powerExponent - TRUTH.powerExponent)).toBeLessThan(0.03);
    expect(Math.abs(fitted.heatingLengthMm - TRUTH.heatingLengthMm)).toBeLessThan(0.3);
    expect(Math.abs(fitted.segmentOffsetMm - TRUTH.segmentOffsetMm)).toBeLessThan(0.2);
    // The table is the model's own: only the sizes' roughness of a few hundredths remains.
    expect(calibration.rmsResidualMm).toBeLessThan(0.05);
    expect(calibration.maxResidualMm).toBeLessThan(0.1);
    expect(calibration.leaveOneOutRmsMm).toBeLessThan(0.05);
    expect(calibration.leaveOneOutMaxMm).toBeLessThan(0.1);
    expect(calibration.isImplausible).toBe(false);
    expect(calibration.modelVersion).toBe(CALIBRATION_MODEL_VERSION);
    // Plain data: what the server stores as JSON comes back the same.
    expect(JSON.parse(JSON.stringify(calibration))).toEqual(calibration);
    expect(judgeCalibration(calibration, 2).isWithinTolerance).toBe(true);
  });

  /*
   * Leave-one-out for least squares has a closed form at the optimum: the errors of row i
   * left out are (I − H_ii)⁻¹·e_i, H = J(JᵀJ)⁻¹Jᵀ the hat matrix, e_i the row's residuals
   * (Allen, Technometrics 1974;16:125 "PRESS"; Cook & Weisberg, Residuals and Influence in
   * Regression, 1982). Refitting the nonlinear model should agree to within its curvature.
   */
  it('refits without each row as the hat-matrix formula predicts (Allen 1974)', SLOW, () => {
    const table = modelTable.map((row, index) => ({
      ...row,
      zoneWidthMm: row.zoneWidthMm + (index === 1 ? 2 : 0),
      zoneLengthMm: row.zoneLengthMm + (index === 2 ? 1.5 : 0),
    }));
    const calibration = calibrateApplicatorProfile({
      activeLengthMm: ACTIVE_LENGTH_MM,
      zoneTable: table,
    });
    const { parameters } = calibration;
    const model = new CalibrationModel(table, ACTIVE_LENGTH_MM, {});
    const x: ParameterVector = [
      Math.log(parameters.couplingEfficiency),
      parameters.powerExponent,
      parameters.heatingLengthMm,
      parameters.segmentOffsetMm,
    ];
    const jacobian = model.rowJacobians(x, model.sizesAt(x)).flat();
    const residuals = calibration.rows.flatMap((row) => [
      row.residualLengthMm,
      row.residualWidthMm,
      row.residualTipOffsetMm,
    ]);
    const inverseNormal = inverse(multiply(transpose(jacobian), jacobian));
    calibration.rows.forEach((row, index) => {
      const block = jacobian.slice(3 * index, 3 * index + 3);
      const hat = multiply(multiply(block, inverseNormal), transpose(block));
      const complement = hat.map((line, a) => line.map((value, b) => (a === b ? 1 : 0) - value));
      const predicted = multiply(inverse(complement), [
        [residuals[3 * index]],
        [residuals[3 * index + 1]],
        [residuals[3 * index + 2]],
      ]).map((line) => line[0]);
      const refitted = rowErrors(
        row.leaveOneOut ?? { lengthMm: NaN, widthMm: NaN, tipOffsetMm: NaN },
      );
      predicted.forEach((value, quantity) => {
        expect(Math.abs(refitted[quantity] - value)).toBeLessThan(0.25);
      });
    });
  });

  it('finds a row 6 mm off the model and keeps the zone advisory', SLOW, () => {
    const table = modelTable.map((row, index) =>
      index === 1 ? { ...row, zoneWidthMm: row.zoneWidthMm + 6 } : row,
    );
    const calibration = calibrateApplicatorProfile({
      activeLengthMm: ACTIVE_LENGTH_MM,
      zoneTable: table,
    });
    // Fitted without the bad row, the model is the one that wrote the other rows, so it
    // predicts the row as written before the change: 6 mm short of the changed table.
    const worst = calibration.rows[1].leaveOneOut;
    expect(Math.abs((worst?.widthMm ?? 0) + 6)).toBeLessThan(0.5);
    expect(calibration.leaveOneOutMaxMm).toBeGreaterThan(5);
    // The fit to all rows spreads the error and hides it: its residuals look far better.
    expect(calibration.maxResidualMm).toBeLessThan(calibration.leaveOneOutMaxMm ?? 0);
    const judged = judgeCalibration(calibration, 2);
    expect(judged.isWithinTolerance).toBe(false);
    expect(judged.advisoryReason).toMatch(
      /predicts this profile’s own zone table to within 6\.[01] mm \(leave-one-out\), beyond the 2 mm tolerance; shown for information only\./,
    );
    expect(judged.boundaryErrorMm).toBeGreaterThan(3);
  });
});

describe('calibration to the demo profiles (server/seeders/demo-plans.ts)', () => {
  it(
    'fits length, width and centre far better than one parameter did, and says how far it predicts',
    SLOW,
    async () => {
      const { demoApplicatorProfiles } = await import('../../../server/seeders/demo-plans');
      for (const profile of demoApplicatorProfiles) {
        const calibration = calibrateApplicatorProfile(profile);
        const rows = calibration.rows;
        // Before: η alone gave an rms of 4.1–4.5 mm on these tables.
        expect(calibration.rmsResidualMm).toBeLessThan(1.5);
        const errors = rows.flatMap((row) =>
          rowErrors(row.leaveOneOut ?? { lengthMm: NaN, widthMm: NaN, tipOffsetMm: NaN }),
        );
        expect(calibration.leaveOneOutRmsMm).toBeCloseTo(
          Math.sqrt(errors.reduce((sum, error) => sum + error * error, 0) / errors.length),
          9,
        );
        expect(calibration.leaveOneOutMaxMm).toBeCloseTo(Math.max(...errors.map(Math.abs)), 9);
        // Predicting a row it was not fitted to is harder than fitting it.
        expect(calibration.leaveOneOutRmsMm).toBeGreaterThanOrEqual(calibration.rmsResidualMm);
        // Both invented tables need less than a tenth of the generator's power at their lowest
        // power: implausible, so the table zone decides whatever the leave-one-out error.
        expect(calibration.isImplausible).toBe(true);
        expect(calibration.implausibleReason).toMatch(
          /^Coupling efficiency 0\.0\d+ at \d+ W, below 0\.1/,
        );
        expect(judgeCalibration(calibration, 2).advisoryReason).toMatch(/implausible settings/);
      }
    },
  );
});

describe('calibration model', () => {
  it('moves the zone with the heating segment, so the offset need not be simulated', () => {
    const heating = [{ powerW: 60, timeS: 300 }];
    const [atTip] = homogeneousZoneSizes(14, heating, 0.2);
    for (const offsetMm of [0.7, 3.3, -4.1]) {
      const [moved] = homogeneousZoneSizes(14, heating, 0.2, { segmentOffsetMm: offsetMm });
      // Exactly so in continuous liver; on the 2 mm lattice within its sub-voxel roughness.
      expect(Math.abs(moved.lengthMm - atTip.lengthMm)).toBeLessThan(0.15);
      expect(Math.abs(moved.widthMm - atTip.widthMm)).toBeLessThan(0.15);
      expect(Math.abs((moved.tipOffsetMm ?? 0) - (atTip.tipOffsetMm ?? 0) - offsetMm)).toBeLessThan(
        0.15,
      );
    }
  });

  it('flags a table out of the model’s reach instead of pretending to fit it', SLOW, () => {
    const calibration = calibrateApplicatorProfile({
      activeLengthMm: ACTIVE_LENGTH_MM,
      // Zones three times longer than wide: beyond any heating segment the model allows.
      zoneTable: [
        { powerW: 60, timeS: 300, zoneLengthMm: 60, zoneWidthMm: 20, tipOffsetMm: 5 },
        { powerW: 60, timeS: 600, zoneLengthMm: 70, zoneWidthMm: 22, tipOffsetMm: 5 },
      ],
    });
    expect(calibration.isImplausible).toBe(true);
    expect(calibration.isAtRangeLimit).toBe(true);
    expect(calibration.implausibleReason).toMatch(/^Heating length at the end of its range/);
    expect(calibration.rmsResidualMm).toBeGreaterThan(5);
    // Two rows leave one to refit four parameters to: no leave-one-out figure.
    expect(calibration.leaveOneOutMaxMm).toBeNull();
    expect(calibration.rows[0].leaveOneOut).toBeNull();
  });

  it('reports progress ending at 1 and stops when cancelled', SLOW, () => {
    const fractions: number[] = [];
    const profile = { activeLengthMm: ACTIVE_LENGTH_MM, zoneTable: modelTable.slice(0, 1) };
    calibrateApplicatorProfile(profile, { onProgress: (fraction) => fractions.push(fraction) });
    expect(fractions.at(-1)).toBe(1);
    expect(() => calibrateApplicatorProfile(profile, { shouldAbort: () => true })).toThrow(
      BioheatAbortedError,
    );
  });

  it.each([
    [{ activeLengthMm: 0, zoneTable: [] }, /activeLengthMm must be a positive number/],
    [{ activeLengthMm: 20, zoneTable: [] }, /zoneTable must hold at least one row/],
    [
      {
        activeLengthMm: 20,
        zoneTable: [{ powerW: 60, timeS: 0, zoneLengthMm: 30, zoneWidthMm: 20, tipOffsetMm: 5 }],
      },
      /zoneTable\[0\]\.timeS must be a positive number/,
    ],
  ])('refuses a malformed profile, naming the field (%#)', (profile, message) => {
    expect(() => calibrateApplicatorProfile(profile)).toThrow(message);
  });
});

function transpose(matrix: readonly (readonly number[])[]): number[][] {
  return matrix[0].map((_, column) => matrix.map((row) => row[column]));
}

function multiply(
  a: readonly (readonly number[])[],
  b: readonly (readonly number[])[],
): number[][] {
  return a.map((row) =>
    b[0].map((_, column) => row.reduce((sum, value, k) => sum + value * b[k][column], 0)),
  );
}

/** Gauss–Jordan inverse of a small well-conditioned matrix. */
function inverse(matrix: readonly (readonly number[])[]): number[][] {
  const size = matrix.length;
  const work = matrix.map((row, index) => [
    ...row,
    ...Array.from({ length: size }, (_, column) => (column === index ? 1 : 0)),
  ]);
  for (let pivot = 0; pivot < size; pivot++) {
    let best = pivot;
    for (let row = pivot + 1; row < size; row++) {
      if (Math.abs(work[row][pivot]) > Math.abs(work[best][pivot])) best = row;
    }
    [work[pivot], work[best]] = [work[best], work[pivot]];
    const divisor = work[pivot][pivot];
    work[pivot] = work[pivot].map((value) => value / divisor);
    for (let row = 0; row < size; row++) {
      if (row === pivot) continue;
      const factor = work[row][pivot];
      work[row] = work[row].map((value, column) => value - factor * work[pivot][column]);
    }
  }
  return work.map((row) => row.slice(size));
}
