/** Shown beside every score, suggestion and verdict: Emberline is decision support only. */
export const clinicalCaution =
  'Decision support only. The treating team decides, following local protocols and licensed practice; ' +
  'check every value against the source record.';
