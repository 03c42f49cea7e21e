// The wording lives in shared so that the board summary PDF prints the reasons as shown here.
export { formatFigure, reasonLine, severityLabels, type ReasonLine } from '@emberline/shared';
