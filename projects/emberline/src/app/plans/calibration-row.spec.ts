import type { AssessmentResult, ProfileCalibration } from '@emberline/shared';
import { calibrationRow, vesselAssumption } from './calibration-row';
import type { ListCell } from './comparison-rows';

const base: ProfileCalibration = {
  profileId: 'p1',
  profileName: 'Demo microwave',
  profileVersion: 2,
  parameter: 0.3,
  rmsResidualMm: 1.04,
  maxResidualMm: 2.16,
  leaveOneOutRmsMm: 1.18,
  leaveOneOutMaxMm: 1.54,
  isAtRangeLimit: false,
  isImplausible: false,
  toleranceMm: 2,
  isWithinTolerance: true,
  rows: [],
};

function resultWith(calibrations?: ProfileCalibration[]): AssessmentResult {
  return {
    engineVersion: '1.1.0',
    ...(calibrations ? { calibrations } : {}),
    applicators: [],
    zones: [],
    primaryZoneModel: 'table',
    heatSinks: [],
    verdict: { level: 'acceptable', reasons: [] },
  };
}

const itemsOf = (result: AssessmentResult) => (calibrationRow([result]).cells[0] as ListCell).items;

describe('calibration row of the plan comparison', () => {
  it('shows fit, leave-one-out and tolerance, and that the physics zone may decide', () => {
    const [item, assumption] = itemsOf(resultWith([base]));
    expect(item.text).toBe(
      'Demo microwave (version 2): fit 1.0 mm rms, largest 2.2 mm; leave-one-out 1.2 mm rms, ' +
        'largest 1.5 mm (tolerance 2.0 mm); within tolerance: the physics zone may decide the ' +
        'verdict.',
    );
    expect(item.flag).toBe('');
    expect(assumption.text).toBe(vesselAssumption);
    expect(vesselAssumption).toContain('strongest heat sink the model allows');
  });

  it('flags a profile beyond tolerance as advisory, with the reason', () => {
    const reason =
      'The heating model predicts this profile’s own zone table to within 3.4 mm ' +
      '(leave-one-out), beyond the 2 mm tolerance; shown for information only.';
    const [item] = itemsOf(
      resultWith([
        { ...base, leaveOneOutMaxMm: 3.4, isWithinTolerance: false, advisoryReason: reason },
      ]),
    );
    expect(item.flag).toBe('Advisory');
    expect(item.text).toContain('largest 3.4 mm (tolerance 2.0 mm); advisory. ' + reason);
  });

  it('says when the table has too few rows to tell', () => {
    const [item] = itemsOf(
      resultWith([
        { ...base, leaveOneOutRmsMm: null, leaveOneOutMaxMm: null, isWithinTolerance: false },
      ]),
    );
    expect(item.text).toContain('leave-one-out: too few rows to tell');
    expect(item.flag).toBe('Advisory');
  });

  it('reads a result stored before the leave-one-out check', () => {
    const [item] = itemsOf(
      resultWith([
        {
          profileId: 'p1',
          parameter: 0.3,
          rmsResidualMm: 4.12,
          isAtRangeLimit: false,
          rows: [{ powerW: 60, timeS: 300, residualLengthMm: 1, residualWidthMm: 2 }],
        },
      ]),
    );
    expect(item.text).toBe(
      'Profile 1: fit 4.1 mm rms over 1 rows; not tested on rows it was not fitted to',
    );
  });

  it('shows nothing for a plan assessed without the physics model', () => {
    const cell = calibrationRow([resultWith()]).cells[0] as ListCell;
    expect(cell.items).toEqual([]);
    expect(cell.emptyText).toBe('Not computed');
  });
});
