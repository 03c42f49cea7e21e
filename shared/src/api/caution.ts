/** Shown beside every score, suggestion and verdict: Emberline is decision support only. */
export const clinicalCaution =
  'Decision support only. The treating team decides, following local protocols and licensed practice; ' +
  'check every value against the source record.';

/** Shown with every figure and replay of the insertion rehearsal. */
export const rehearsalCaution =
  'The insertion rehearsal is a simulation estimate with assumed tissue, breathing and needle ' +
  'parameters, not a prediction for this patient. The treating team decides, following local ' +
  'protocols and licensed practice.';
