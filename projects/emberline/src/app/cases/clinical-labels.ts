import type { Ascites, CouinaudSegment, Encephalopathy, Sex } from '@emberline/shared';

/** Words the case file shows for coded values that `@emberline/shared` does not label. */
export const sexLabels: Record<Sex, string> = {
  female: 'Female',
  male: 'Male',
  other: 'Other',
  unknown: 'Not known',
};

export const ascitesLabels: Record<Ascites, string> = {
  none: 'None',
  mild: 'Mild',
  'moderate-severe': 'Moderate to severe',
};

export const encephalopathyLabels: Record<Encephalopathy, string> = {
  none: 'None',
  'grade-1-2': 'Grade 1–2',
  'grade-3-4': 'Grade 3–4',
};

/** ECOG performance status 0–4, in a few words each. */
export const ecogLabels: readonly string[] = [
  '0 · Fully active',
  '1 · Light work only',
  '2 · Self-care, up more than half the day',
  '3 · Limited self-care, in bed or chair more than half the day',
  '4 · Confined to bed or chair, no self-care',
];

export const segmentLabels: Record<CouinaudSegment, string> = {
  I: 'I (caudate)',
  II: 'II',
  III: 'III',
  IV: 'IV',
  V: 'V',
  VI: 'VI',
  VII: 'VII',
  VIII: 'VIII',
};

/** Units as the user reads them: the API spells µmol/L in ASCII. */
export const unitLabels: Record<string, string> = {
  'mg/dL': 'mg/dL',
  'umol/L': 'µmol/L',
  'g/dL': 'g/dL',
  'g/L': 'g/L',
};

/** Yes, no or not recorded, for the tri-state findings. */
export function findingLabel(value: boolean | null): string {
  if (value === null) return 'Not recorded';
  return value ? 'Yes' : 'No';
}
