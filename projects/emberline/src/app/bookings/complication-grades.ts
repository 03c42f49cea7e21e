/** The classification the complication grades follow, named wherever a grade is asked or shown. */
export const complicationClassification =
  'Graded by the Clavien–Dindo classification of complications (Dindo, Demartines, Clavien; ' +
  'Ann Surg 2004;240:205–213)';
