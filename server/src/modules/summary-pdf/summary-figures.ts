/**
 * The figures the plan comparison leads with, for print: the same readings as the comparison's
 * summary band (`leadFigures` in shared/ computes both), labelled as the PDF lays them out.
 */
import {
  leadFigures as comparisonLeadFigures,
  tumourLabeller,
  verdictLevelLabels,
} from '@emberline/shared';
import type { SummaryPlan } from './summary-content';

export interface PrintedFigure {
  label: string;
  text: string;
  note: string;
}

export function verdictWords(plan: SummaryPlan): string {
  return verdictLevelLabels[plan.assessment.result.verdict.level];
}

/** The lead figures of one assessed plan, in the comparison's order. */
export function leadFigures(plan: SummaryPlan): PrintedFigure[] {
  const { result, inputs } = plan.assessment;
  const figures = comparisonLeadFigures(
    result,
    inputs ?? null,
    tumourLabeller([result], new Map()),
  );
  return [
    { label: 'Nearest clearance', ...figures.clearance },
    { label: 'Lowest coverage', ...figures.coverage },
    { label: 'Smallest margin', ...figures.margin },
    { label: 'Zone model used', ...figures.zoneModel },
  ].map(({ label, text, note }) => ({ label, text, note }));
}
