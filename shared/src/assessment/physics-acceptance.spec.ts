import { describe, expect, it } from 'vitest';
import {
  CALIBRATION_MODEL_VERSION,
  DAMAGE_INTERPOLATION_ERROR_MM,
  type ApplicatorCalibration,
} from '../bioheat';
import {
  GRID_ORIENTATION_ERROR_MM,
  judgeCalibration,
  judgePhysicsZone,
  physicsToleranceMm,
  profileCalibrationSummary,
} from './physics-acceptance';

/** A stored calibration (plain data) with the figures the judgement reads. */
function calibration(overrides: Partial<ApplicatorCalibration> = {}): ApplicatorCalibration {
  return {
    modelVersion: CALIBRATION_MODEL_VERSION,
    parameters: {
      couplingEfficiency: 0.4,
      powerExponent: 0.2,
      referencePowerW: 60,
      heatingLengthMm: 14,
      segmentOffsetMm: 1,
    },
    rows: [
      {
        powerW: 60,
        timeS: 300,
        tableLengthMm: 30,
        tableWidthMm: 22,
        tableTipOffsetMm: 6,
        modelLengthMm: 31,
        modelWidthMm: 21.5,
        modelTipOffsetMm: 6.5,
        residualLengthMm: 1,
        residualWidthMm: -0.5,
        residualTipOffsetMm: 0.5,
        leaveOneOut: { lengthMm: 1.4, widthMm: -0.8, tipOffsetMm: 0.6 },
      },
    ],
    rmsResidualMm: 0.7,
    maxResidualMm: 1,
    leaveOneOutRmsMm: 1,
    leaveOneOutMaxMm: 1.4,
    leaveOneOutBoundaryMm: 1.3,
    isAtRangeLimit: false,
    isImplausible: false,
    simulations: 30,
    caution: '',
    ...overrides,
  };
}

describe('whether the physics zone may decide the verdict', () => {
  it('accepts a plausible calibration within tolerance; the boundary error adds up in quadrature', () => {
    const judged = judgeCalibration(calibration(), 2);
    expect(judged.isWithinTolerance).toBe(true);
    expect(judged.advisoryReason).toBeUndefined();
    // √(1.3² + 0.25² + (2/12)²): independent errors combine as a root sum of squares.
    expect(judged.boundaryErrorMm).toBeCloseTo(
      Math.sqrt(1.3 ** 2 + DAMAGE_INTERPOLATION_ERROR_MM ** 2 + GRID_ORIENTATION_ERROR_MM ** 2),
      12,
    );
    expect(GRID_ORIENTATION_ERROR_MM).toBeCloseTo(2 / 12, 12);
  });

  it('keeps the zone advisory for each reason, in clinical words', () => {
    expect(judgeCalibration(calibration({ leaveOneOutMaxMm: 2.04 }), 2).advisoryReason).toBe(
      // Rounded up, so that a bound beyond the tolerance never reads as within it.
      'The heating model predicts this profile’s own zone table to within 2.1 mm ' +
        '(leave-one-out), beyond the 2 mm tolerance; shown for information only.',
    );
    expect(
      judgeCalibration(
        calibration({
          isImplausible: true,
          implausibleReason: 'Coupling efficiency 0.050 at 40 W, below 0.1: too little.',
        }),
        2,
      ).advisoryReason,
    ).toBe(
      'The heating model matches this profile’s zone table only with implausible settings ' +
        '(coupling efficiency 0.050 at 40 W, below 0.1: too little); shown for information only.',
    );
    expect(
      judgeCalibration(
        calibration({
          leaveOneOutMaxMm: null,
          leaveOneOutRmsMm: null,
          leaveOneOutBoundaryMm: null,
        }),
        2,
      ).advisoryReason,
    ).toMatch(/has 1 row\(s\), too few to test the heating model/);
    expect(judgeCalibration(calibration({ modelVersion: 'older' }), 2).advisoryReason).toMatch(
      /earlier version of the model/,
    );
  });

  it('judges a plan by all its applicators and names those that fail', () => {
    const good = calibration();
    const far = calibration({ leaveOneOutMaxMm: 3.4, leaveOneOutBoundaryMm: 2.9 });
    const plan = judgePhysicsZone([good, far, far], 2);
    expect(plan.isAccepted).toBe(false);
    expect(plan.advisoryReason).toBe(
      'Applicators 2 and 3: the heating model predicts this profile’s own zone table to within ' +
        '3.4 mm (leave-one-out), beyond the 2 mm tolerance; shown for information only.',
    );
    expect(plan.boundaryErrorMm).toBeCloseTo(judgeCalibration(far, 2).boundaryErrorMm, 12);
    // One profile for every applicator: the reason needs no names.
    expect(judgePhysicsZone([far, far], 2).advisoryReason).toMatch(/^The heating model predicts/);
    expect(judgePhysicsZone([good, good], 2).isAccepted).toBe(true);
  });

  it('reads the tolerance from the safety profile, 2 mm when a stored one has none', () => {
    expect(physicsToleranceMm({ physicsToleranceMm: 3 })).toBe(3);
    expect(physicsToleranceMm({} as { physicsToleranceMm: number })).toBe(2);
  });

  it('summarises a profile for the result with its parameters by name and its judgement', () => {
    const summary = profileCalibrationSummary('profile-1', calibration({ leaveOneOutMaxMm: 3 }), 2);
    expect(summary).toMatchObject({
      profileId: 'profile-1',
      parameter: 0.4,
      parameters: { couplingEfficiency: 0.4, powerExponent: 0.2, heatingLengthMm: 14 },
      maxResidualMm: 1,
      leaveOneOutMaxMm: 3,
      toleranceMm: 2,
      isWithinTolerance: false,
      isImplausible: false,
    });
    expect(summary.advisoryReason).toMatch(/within 3\.0 mm/);
    expect(summary.rows[0].residualTipOffsetMm).toBe(0.5);
  });
});
