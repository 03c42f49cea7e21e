/**
 * The summary band of the plan comparison, one line a plan: the verdict and the figures the
 * comparison leads with (`leadFigures` in shared/, which the board summary PDF prints too).
 * Pure: the band only draws these lines.
 */
import {
  leadFigures,
  tumourLabeller,
  type SummaryFigure,
  type VerdictLevel,
  type ZoneModel,
} from '@emberline/shared';
import type { ComparedPlan } from '../comparison-rows';

export type { SummaryFigure } from '@emberline/shared';

export interface SummaryLine {
  planId: string;
  planName: string;
  assessmentId: string;
  primaryZoneModel: ZoneModel;
  verdict: VerdictLevel;
  /** "1 refusal · 2 cautions", or that no rule raised one. */
  reasonCount: string;
  clearance: SummaryFigure;
  coverage: SummaryFigure;
  margin: SummaryFigure;
  zoneModel: SummaryFigure;
  /** The plan's inputs changed since the assessment ran. */
  isOnEarlierInputs: boolean;
}

/** The summary lines of the compared plans, in column order. */
export function summaryLines(
  columns: readonly ComparedPlan[],
  tumourNames: ReadonlyMap<string, string>,
): SummaryLine[] {
  const tumourLabel = tumourLabeller(
    columns.map((column) => column.result),
    tumourNames,
  );
  return columns.map(({ plan, assessment, result }) => ({
    planId: plan.id,
    planName: plan.name,
    assessmentId: assessment.id,
    primaryZoneModel: result.primaryZoneModel,
    verdict: result.verdict.level,
    ...leadFigures(result, assessment.inputs, tumourLabel),
    isOnEarlierInputs: (assessment.inputChanges ?? []).length > 0,
  }));
}
