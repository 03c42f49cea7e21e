import type { AssessmentResult, ProfileCalibration } from '@emberline/shared';
import type { ComparisonRow, ListCell } from './comparison-rows';
import { formatFigure } from './verdict-reason-lines';

/**
 * Said under the profiles of every plan the physics model ran on: the model treats each large
 * vessel as if its blood took away any heat at once.
 */
export const vesselAssumption =
  'Each large vessel is held at blood temperature: the strongest heat sink the model allows ' +
  '(real blood flow cools less), so beside a vessel the physics zone is the smallest the model ' +
  'can give.';

/**
 * The comparison row of the heating model's calibration: for each applicator profile of a
 * plan, how well the model fits its zone table, how well it predicts rows it was not fitted to
 * (leave-one-out), and whether the physics zone may therefore decide the verdict or is only
 * advisory, with the reason.
 */
export function calibrationRow(results: readonly AssessmentResult[]): ComparisonRow {
  return {
    key: 'calibration',
    label: 'Physics model against each profile’s zone table: fit and leave-one-out error (mm)',
    direction: null,
    cells: results.map((result): ListCell => {
      const calibrations = result.calibrations ?? [];
      return {
        type: 'list',
        emptyText: 'Not computed',
        items: calibrations.length
          ? [
              ...calibrations.map((calibration, index) => calibrationItem(calibration, index)),
              { text: vesselAssumption, flag: '' },
            ]
          : [],
      };
    }),
  };
}

function calibrationItem(
  calibration: ProfileCalibration,
  index: number,
): { text: string; flag: string } {
  const name =
    (calibration.profileName ?? `Profile ${index + 1}`) +
    (calibration.profileVersion === undefined ? '' : ` (version ${calibration.profileVersion})`);
  const fit =
    `fit ${formatFigure(calibration.rmsResidualMm, 1, 'mm')} rms` +
    (calibration.maxResidualMm === undefined
      ? ` over ${calibration.rows.length} rows`
      : `, largest ${formatFigure(calibration.maxResidualMm, 1, 'mm')}`);
  // Results stored before the leave-one-out check carry none of its figures.
  if (calibration.isWithinTolerance === undefined) {
    return {
      text:
        `${name}: ${fit}` +
        (calibration.isAtRangeLimit ? ' (table beyond the model’s reach)' : '') +
        '; not tested on rows it was not fitted to',
      flag: '',
    };
  }
  const looRms = calibration.leaveOneOutRmsMm;
  const looMax = calibration.leaveOneOutMaxMm;
  const prediction =
    looRms === null || looRms === undefined || looMax === null || looMax === undefined
      ? 'leave-one-out: too few rows to tell'
      : `leave-one-out ${formatFigure(looRms, 1, 'mm')} rms, largest ` +
        formatFigure(looMax, 1, 'mm');
  const tolerance =
    calibration.toleranceMm === undefined
      ? ''
      : ` (tolerance ${formatFigure(calibration.toleranceMm, 1, 'mm')})`;
  const verdict = calibration.isWithinTolerance
    ? 'within tolerance: the physics zone may decide the verdict.'
    : `advisory. ${calibration.advisoryReason ?? 'Shown for information only.'}`;
  return {
    text: `${name}: ${fit}; ${prediction}${tolerance}; ${verdict}`,
    flag: calibration.isWithinTolerance ? '' : 'Advisory',
  };
}
