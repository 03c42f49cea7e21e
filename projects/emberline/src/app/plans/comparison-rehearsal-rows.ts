import type {
  ApplicatorRehearsal,
  AssessmentResult,
  RehearsalMeshResolution,
  RehearsalStrategy,
} from '@emberline/shared';
import type {
  AbsentCell,
  ComparedPlan,
  ComparisonCell,
  ComparisonGroup,
  ComparisonRow,
  FigureCell,
} from './comparison-rows';
import { rehearsalCaution } from './rehearsal-caution';
import { defaultTipErrorThresholdMm } from './rehearsal-plot';
import { formatFigure } from './verdict-reason-lines';

/** What a plan's column says when its assessment carries no rehearsal and no note on why. */
export const notRehearsedText = 'Not rehearsed on this assessment';

/**
 * How the robot-assisted run found how the tip answers a move of the needle base, in words a
 * board can follow (the engine's identifiers are for engineers).
 */
export const rehearsalStrategyLabels: Record<RehearsalStrategy, string> = {
  'full-step': 'a full simulation step per trial move',
  'resolve-constraints': 'free motion reused, contacts solved again per trial move',
  'pseudo-constraints': 'estimated from the contact solve alone',
  factorised: 'all trial moves through one factorised contact system',
};

export const rehearsalMeshLabels: Record<RehearsalMeshResolution, string> = {
  coarse: 'coarse',
  medium: 'medium',
  fine: 'fine',
};

/**
 * The group "Insertion rehearsal" of the comparison: per applicator, the tip error the
 * rehearsal predicts free-hand and robot-assisted (or why the assisted run did not reach the
 * target), how far the target moves over a breath, and a plot of the tip error along the
 * insertion with the run's settings and its 3D replay. Not ranked: the figures come from a
 * generic tissue and breathing model, and marking one plan "better" on them would lend them a
 * weight the caution denies. A plan without a rehearsal says why (the engine's note) in each
 * of its cells; when no plan has one, the group holds one row saying so.
 */
export function rehearsalGroup(columns: readonly ComparedPlan[]): ComparisonGroup {
  const group = (rows: ComparisonRow[]): ComparisonGroup => ({
    key: 'rehearsal',
    title: 'Insertion rehearsal',
    caution: rehearsalCaution,
    rows,
  });
  const missing = columns.map(({ result }) => missingText(result));
  if (columns.every(({ result }) => !result.rehearsal?.length)) {
    return group([
      {
        key: 'rehearsal-missing',
        label: 'Insertion rehearsal (mm: predicted tip error and target motion)',
        direction: null,
        cells: missing.map(absent),
      },
    ]);
  }
  const count = Math.max(
    0,
    ...columns.map(({ result }) => result.applicators.length),
    ...columns.flatMap(({ result }) =>
      (result.rehearsal ?? []).map((entry) => entry.applicatorIndex + 1),
    ),
  );
  const rows: ComparisonRow[] = [];
  for (let index = 0; index < count; index++) {
    const prefix = count === 1 ? '' : `Applicator ${index + 1}: `;
    const entries = columns.map(({ result }) =>
      result.rehearsal?.find((entry) => entry.applicatorIndex === index),
    );
    const cellsOf = (cell: (entry: ApplicatorRehearsal, column: number) => ComparisonCell) =>
      entries.map((entry, column) => (entry ? cell(entry, column) : absent(missing[column])));
    rows.push(
      {
        key: `rehearsal-freehand-${index}`,
        label: `${prefix}Predicted tip error, free-hand (mm)`,
        direction: null,
        cells: cellsOf((entry) =>
          figure(entry.freehandTipErrorMm, formatFigure(entry.freehandTipErrorMm, 1, 'mm')),
        ),
      },
      {
        key: `rehearsal-assisted-${index}`,
        label: `${prefix}Predicted tip error, robot-assisted (mm)`,
        direction: null,
        cells: cellsOf(assistedCell),
      },
      {
        key: `rehearsal-motion-${index}`,
        label: `${prefix}Target motion over one breath (mm; largest displacement, superior–inferior range)`,
        direction: null,
        cells: cellsOf((entry) =>
          figure(
            entry.targetMotionMm,
            `${formatFigure(entry.targetMotionMm, 1, 'mm')} largest`,
            `${formatFigure(entry.targetSiRangeMm, 1, 'mm')} superior–inferior range`,
          ),
        ),
      },
      {
        key: `rehearsal-path-${index}`,
        label: `${prefix}Tip error along the insertion (mm, against depth in mm)`,
        direction: null,
        cells: cellsOf((entry, column) => ({
          type: 'rehearsal',
          assessmentId: columns[column].assessment.id,
          planName: columns[column].plan.name,
          rehearsal: entry,
          runLine: rehearsalRunLine(entry),
          note: columns[column].result.rehearsalNote ?? '',
          thresholdMm: rehearsalThresholdMm(columns[column]),
        })),
      },
    );
  }
  return group(rows);
}

/** "Mesh 2886 nodes (medium), strategy: …, breathing 12 mm / 4 s, control step 52 ms". */
export function rehearsalRunLine(entry: ApplicatorRehearsal): string {
  const { amplitudeMm, periodS } = entry.breathing;
  return (
    `Mesh ${entry.meshNodes} nodes (${rehearsalMeshLabels[entry.meshResolution]}` +
    (entry.meshQuality
      ? `; smallest angle ${compact(entry.meshQuality.minDihedralDeg)}°, ` +
        `aspect ratio ≤ ${compact(entry.meshQuality.maxAspectRatio)}`
      : '') +
    '), ' +
    `strategy: ${rehearsalStrategyLabels[entry.strategy]}, ` +
    `breathing ${compact(amplitudeMm)} mm / ${compact(periodS)} s, ` +
    `control step ${Math.round(entry.stepMs)} ms`
  );
}

/**
 * The tolerance the verdict judged this assessment's assisted tip error by (its safety profile
 * as assessed), so the plot's line means what the verdict meant; 2 mm where the assessment's
 * inputs do not carry one (assessments from before the tolerance existed).
 */
export function rehearsalThresholdMm({ assessment }: ComparedPlan): number {
  const toleranceMm = assessment.inputs?.safetyProfile.rehearsalToleranceMm;
  return typeof toleranceMm === 'number' && Number.isFinite(toleranceMm) && toleranceMm >= 0
    ? toleranceMm
    : defaultTipErrorThresholdMm;
}

function assistedCell(entry: ApplicatorRehearsal): FigureCell {
  if (entry.reached && entry.assistedTipErrorMm !== null) {
    return figure(entry.assistedTipErrorMm, formatFigure(entry.assistedTipErrorMm, 1, 'mm'));
  }
  return {
    type: 'figure',
    value: null,
    text: 'Not reached',
    note: entry.notReachedReason ?? 'The rehearsal gave no reason.',
    isBest: false,
  };
}

function missingText(result: AssessmentResult): string {
  const note = result.rehearsalNote?.trim();
  if (note) return note;
  return result.rehearsal?.length ? 'Not rehearsed for this applicator' : notRehearsedText;
}

/** Up to one decimal, without a trailing ".0": 12 mm, 4.5 s. */
function compact(value: number): string {
  return String(Number(value.toFixed(1)));
}

function figure(value: number, text: string, note = ''): FigureCell {
  return { type: 'figure', value, text, note, isBest: false };
}

function absent(text: string): AbsentCell {
  return { type: 'absent', text };
}
