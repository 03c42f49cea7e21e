/**
 * How a tumour is named in coverage figures, verdict messages and the plan comparison: by the
 * lesion of the case it was confirmed to show ("segment VIII, 24 mm"), as the board names it —
 * never by a label number alone, which means nothing at the board.
 */
import type { AssessmentStructure } from './assessment-input';

/**
 * The tumour's label: its confirmed lesion's (`structure.label`), else
 * "label N, not linked to a lesion".
 */
export function tumourLabelOf(
  structure: Pick<AssessmentStructure, 'labelValue' | 'label'>,
): string {
  return structure.label ?? `label ${structure.labelValue}, not linked to a lesion`;
}

/** The tumour as a sentence names it: "The tumour (segment VIII, 24 mm)". */
export function tumourName(label: string): string {
  return `The tumour (${label})`;
}
