import {
  structureKindLabels,
  structureKinds,
  tumourLabeller,
  zoneModelLabels,
  zoneModels,
  type ApplicatorRehearsal,
  type ApplicatorSafety,
  type AssessmentResult,
  type AssessmentView,
  type PlanView,
  type StructureKind,
  type VerdictLevel,
  type ZoneAssessment,
  type ZoneModel,
} from '@emberline/shared';
import { calibrationRow } from './calibration-row';
import { bestIndexes, figureDirections, type BetterDirection } from './figure-comparison';
import { formatFigure, reasonLine, type ReasonLine } from './verdict-reason-lines';

/** A plan with its newest assessment, done: one column of the comparison. */
export interface ComparedPlan {
  plan: PlanView;
  assessment: AssessmentView;
  result: AssessmentResult;
}

export interface FigureCell {
  type: 'figure';
  /** The value ranked, in the row's unit; null when the plan has no such figure. */
  value: number | null;
  text: string;
  /** A second line: where along the path, against which limit … */
  note: string;
  isBest: boolean;
}

export interface ListCell {
  type: 'list';
  items: { text: string; flag: string }[];
  emptyText: string;
}

export interface VerdictCell {
  type: 'verdict';
  level: VerdictLevel;
  reasons: ReasonLine[];
}

/** The plan has no such figure at all (no second applicator, a zone model not computed). */
export interface AbsentCell {
  type: 'absent';
  text: string;
}

/**
 * One applicator's insertion rehearsal in one plan: its tip error along the path (a plot), how
 * it ran, and the way to its replay in 3D (`comparison-rehearsal-rows.ts`).
 */
export interface RehearsalCell {
  type: 'rehearsal';
  assessmentId: string;
  planName: string;
  rehearsal: ApplicatorRehearsal;
  /** Mesh, strategy and breathing of the run, in words. */
  runLine: string;
  /** The engine's note on an incomplete rehearsal, or empty. */
  note: string;
  /** The line drawn on the plot: the assessed safety profile's rehearsal tolerance, mm. */
  thresholdMm: number;
}

export type ComparisonCell = FigureCell | ListCell | VerdictCell | AbsentCell | RehearsalCell;

export interface ComparisonRow {
  key: string;
  /** The figure, with its unit in brackets. */
  label: string;
  /** How the row is ranked; null when no value is better than another. */
  direction: BetterDirection | null;
  cells: ComparisonCell[];
}

export interface ComparisonGroup {
  key: string;
  title: string;
  rows: ComparisonRow[];
  /** A caution shown under the group's heading, across every column (the rehearsal's). */
  caution?: string;
}

/** Kinds a path enters by design: a clearance to them says nothing. */
const kindsEnteredOnPurpose = new Set<StructureKind>(['skin', 'liver', 'tumour']);

const absent = (text: string): AbsentCell => ({ type: 'absent', text });

/** The rows of the comparison, grouped: verdict, each applicator, each zone model, heat sinks. */
export function comparisonGroups(
  columns: readonly ComparedPlan[],
  tumourNames: ReadonlyMap<string, string>,
): ComparisonGroup[] {
  const results = columns.map((column) => column.result);
  const applicatorCount = Math.max(0, ...results.map((result) => result.applicators.length));
  const groups: ComparisonGroup[] = [verdictGroup(results)];
  for (let index = 0; index < applicatorCount; index++) {
    groups.push(applicatorGroup(results, index, applicatorCount));
  }
  const tumourLabel = tumourLabeller(results, tumourNames);
  for (const model of zoneModels) {
    if (results.some((result) => zoneOf(result, model))) {
      groups.push(zoneGroup(results, model, tumourLabel));
    }
  }
  groups.push({
    key: 'heat-sinks',
    title: 'Heat sinks',
    rows: [
      {
        key: 'heat-sinks',
        label:
          'Heat-sink vessels (diameter mm, with the range of calibres it could be; distance to ' +
          'the zone mm, with the least it could be)',
        direction: null,
        cells: results.map((result) => ({
          type: 'list',
          emptyText: 'None found',
          items: result.heatSinks.map((vessel) => ({
            text:
              `${structureKindLabels[vessel.kind]}: ${withBand(vessel)} wide, ` +
              `${withBound(vessel.distanceMm, vessel.distanceLowerMm)} from the zone`,
            flag: vessel.isPossible ? 'Possible: unconfirmed at this slice thickness' : '',
          })),
        })),
      },
    ],
  });
  return groups;
}

function verdictGroup(results: readonly AssessmentResult[]): ComparisonGroup {
  return {
    key: 'verdict',
    title: 'Verdict',
    rows: [
      {
        key: 'verdict',
        label: 'Verdict and its reasons (measured value against threshold)',
        direction: null,
        cells: results.map((result) => ({
          type: 'verdict',
          level: result.verdict.level,
          reasons: result.verdict.reasons.map(reasonLine),
        })),
      },
      {
        key: 'primary-zone',
        label: 'Zone model the verdict uses',
        direction: null,
        cells: results.map((result) => ({
          type: 'list',
          emptyText: '',
          items: [{ text: zoneModelLabels[result.primaryZoneModel], flag: '' }],
        })),
      },
      calibrationRow(results),
    ],
  };
}

function applicatorGroup(
  results: readonly AssessmentResult[],
  index: number,
  count: number,
): ComparisonGroup {
  const name = count === 1 ? 'Applicator' : `Applicator ${index + 1}`;
  const applicators = results.map((result) => result.applicators[index]);
  const missing = absent(`No applicator ${index + 1}`);
  const rows: ComparisonRow[] = [
    ranked(
      'path-length',
      'Path length vs working length (mm)',
      figureDirections.pathLengthMm,
      1,
      applicators.map((applicator) =>
        applicator
          ? {
              value: applicator.pathLengthMm,
              text:
                `${formatFigure(applicator.pathLengthMm, 1, 'mm')} of ` +
                formatFigure(applicator.workingLengthMm, 1, 'mm'),
              note:
                applicator.pathLengthMm > applicator.workingLengthMm
                  ? 'Longer than the working length'
                  : '',
            }
          : missing,
      ),
    ),
    ranked(
      'angulation',
      'Angulation from the axial plane (°)',
      figureDirections.angulationDeg,
      1,
      applicators.map((applicator) =>
        applicator
          ? {
              value: applicator.angulationDeg,
              text: formatFigure(applicator.angulationDeg, 1, '°'),
            }
          : missing,
      ),
    ),
    ranked(
      'capsule-crossings',
      'Liver capsule crossings (count)',
      figureDirections.capsuleCrossings,
      0,
      applicators.map((applicator) =>
        applicator
          ? { value: applicator.capsuleCrossings, text: String(applicator.capsuleCrossings) }
          : missing,
      ),
    ),
    {
      key: 'parenchyma',
      label: `Liver parenchyma before the tumour (mm; ${boundWords})`,
      direction: null,
      cells: applicators.map((applicator) => {
        if (!applicator) return missing;
        const lengthMm = applicator.parenchymaBeforeTumourMm;
        return lengthMm === null
          ? absent('The path meets no tumour')
          : figure(lengthMm, withBound(lengthMm, applicator.parenchymaBeforeTumourLowerMm));
      }),
    },
  ];
  for (const kind of clearanceKinds(applicators)) {
    rows.push(
      ranked(
        `clearance-${kind}`,
        `Nearest clearance, ${structureKindLabels[kind].toLowerCase()} ` +
          `(mm; ${boundWords}; at mm along the path)`,
        figureDirections.clearanceMm,
        1,
        applicators.map((applicator) => {
          if (!applicator) return missing;
          const clearance = applicator.clearances.find((candidate) => candidate.kind === kind);
          if (!clearance) return absent('Not in the assessed region');
          return {
            value: clearance.minDistanceMm,
            text: withBound(clearance.minDistanceMm, clearance.lowerBoundMm),
            note: `at ${formatFigure(clearance.atMm, 1, 'mm')} along the path`,
          };
        }),
      ),
    );
  }
  rows.push({
    key: 'traversed',
    label: 'Structures traversed (length inside, mm; critical flagged)',
    direction: null,
    cells: applicators.map((applicator) =>
      applicator
        ? {
            type: 'list',
            emptyText: 'None',
            items: applicator.traversed.map((structure) => ({
              text: `${structureKindLabels[structure.kind]}: ${formatFigure(structure.lengthMm, 1, 'mm')}`,
              flag: structure.critical ? 'Critical' : '',
            })),
          }
        : missing,
    ),
  });
  return { key: `applicator-${index}`, title: `${name}: trajectory`, rows };
}

function zoneGroup(
  results: readonly AssessmentResult[],
  model: ZoneModel,
  tumourLabel: (structureId: string) => string,
): ComparisonGroup {
  const zones = results.map((result) => zoneOf(result, model));
  const notComputed = absent('Not computed');
  const rows: ComparisonRow[] = [
    {
      key: 'zone-volume',
      label: 'Zone volume (mL)',
      direction: null,
      cells: zones.map((zone) =>
        zone ? figure(zone.volumeMl, formatFigure(zone.volumeMl, 1, 'mL')) : notComputed,
      ),
    },
  ];
  const tumourIds = unique(zones.flatMap((zone) => zone?.tumours.map((t) => t.structureId) ?? []));
  for (const structureId of tumourIds) {
    const name = tumourLabel(structureId);
    const tumours = zones.map((zone) =>
      zone
        ? (zone.tumours.find((tumour) => tumour.structureId === structureId) ?? null)
        : undefined,
    );
    const cellsOf = (
      pick: (tumour: NonNullable<(typeof tumours)[number]>) => number,
      unit: string,
      pickBound?: (tumour: NonNullable<(typeof tumours)[number]>) => number | undefined,
    ) =>
      tumours.map((tumour) => {
        if (tumour === undefined) return notComputed;
        if (tumour === null) return absent('Not treated by this plan');
        const text = pickBound
          ? withBound(pick(tumour), pickBound(tumour), unit)
          : formatFigure(pick(tumour), 1, unit);
        return { value: pick(tumour), text };
      });
    rows.push(
      ranked(
        `coverage-${structureId}`,
        `${name}: volume covered (%)`,
        figureDirections.coveredPercent,
        1,
        cellsOf((tumour) => tumour.coveredPercent, '%'),
      ),
      ranked(
        `margin-${structureId}`,
        `${name}: minimal ablative margin (mm; ${boundWords} and the zone model's)`,
        figureDirections.minimalMarginMm,
        1,
        cellsOf(
          (tumour) => tumour.minimalMarginMm,
          'mm',
          (tumour) => tumour.minimalMarginLowerMm,
        ),
      ),
      ranked(
        `below-target-${structureId}`,
        `${name}: surface below the margin target (%)`,
        figureDirections.surfaceBelowTargetPercent,
        1,
        cellsOf((tumour) => tumour.surfaceBelowTargetPercent, '%'),
      ),
    );
  }
  const collateralKinds = structureKinds.filter((kind) =>
    zones.some((zone) => zone?.collateral.some((entry) => entry.kind === kind)),
  );
  for (const kind of collateralKinds) {
    rows.push(
      ranked(
        `collateral-${kind}`,
        `Collateral volume, ${structureKindLabels[kind].toLowerCase()} (mL)`,
        figureDirections.collateralMl,
        2,
        zones.map((zone) => {
          if (!zone) return notComputed;
          // The engine lists only kinds the zone reaches: a kind left out has none inside.
          const volumeMl = zone.collateral.find((entry) => entry.kind === kind)?.volumeMl ?? 0;
          return { value: volumeMl, text: formatFigure(volumeMl, 2, 'mL') };
        }),
      ),
    );
  }
  return { key: `zone-${model}`, title: `Ablation zone: ${zoneModelLabels[model]}`, rows };
}

type RankedInput = { value: number; text: string; note?: string } | AbsentCell;

/** A row of figures with the best ones marked (compared as shown, to `decimals`). */
function ranked(
  key: string,
  label: string,
  direction: BetterDirection,
  decimals: number,
  inputs: RankedInput[],
): ComparisonRow {
  const values = inputs.map((input) => ('type' in input ? null : input.value));
  const best = new Set(bestIndexes(values, direction, decimals));
  return {
    key,
    label,
    direction,
    cells: inputs.map((input, index) =>
      'type' in input
        ? input
        : { ...figure(input.value, input.text, input.note), isBest: best.has(index) },
    ),
  };
}

/** How a row's label explains the bracketed bound of its figures. */
const boundWords = 'in brackets the least it could be, allowing a voxel of error';

/**
 * A figure read from the label map with its conservative bound: "8.0 mm (≥ 6.4 mm)". The
 * bracket is left out where the bound is missing (results from before bounds) or reads the
 * same as the figure.
 */
export function withBound(value: number, bound: number | null | undefined, unit = 'mm'): string {
  const text = formatFigure(value, 1, unit);
  if (bound === null || bound === undefined) return text;
  const boundText = formatFigure(bound, 1, unit);
  return boundText === text ? text : `${text} (≥ ${boundText})`;
}

/** A vessel's calibre with its band: "3.1 mm (2.6 to 3.5 mm)". */
function withBand(vessel: AssessmentResult['heatSinks'][number]): string {
  const text = formatFigure(vessel.diameterMm, 1, 'mm');
  const { diameterLowerMm: lower, diameterUpperMm: upper } = vessel;
  if (lower === undefined || upper === undefined) return text;
  return `${text} (${formatFigure(lower, 1, '')} to ${formatFigure(upper, 1, 'mm')})`;
}

function figure(value: number, text: string, note = ''): FigureCell {
  return { type: 'figure', value, text, note, isBest: false };
}

function zoneOf(result: AssessmentResult, model: ZoneModel): ZoneAssessment | undefined {
  return result.zones.find((zone) => zone.model === model);
}

function clearanceKinds(applicators: readonly (ApplicatorSafety | undefined)[]): StructureKind[] {
  return structureKinds.filter(
    (kind) =>
      !kindsEnteredOnPurpose.has(kind) &&
      applicators.some((applicator) => applicator?.clearances.some((entry) => entry.kind === kind)),
  );
}

function unique<T>(values: readonly T[]): T[] {
  return [...new Set(values)];
}
