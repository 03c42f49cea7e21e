import {
  createCaseSchema,
  primaryDiagnoses,
  primaryDiagnosisLabels,
  sexes,
  type PrimaryDiagnosis,
  type Sex,
} from '@emberline/shared';
import { Validators, type ValidatorFn } from '@angular/forms';
import { zodValidator } from '../core/zod-validator';
import { ecogLabels, sexLabels } from './clinical-labels';

/** Choices and rules shared by the new-case dialog and the summary form. */
export const sexOptions = sexes.map((value: Sex) => ({ value, label: sexLabels[value] }));
export const diagnosisOptions = primaryDiagnoses.map((value: PrimaryDiagnosis) => ({
  value,
  label: primaryDiagnosisLabels[value],
}));
export const ecogOptions = ecogLabels.map((label, value) => ({ value, label }));
export const findingOptions: readonly { value: boolean | null; label: string }[] = [
  { value: true, label: 'Yes' },
  { value: false, label: 'No' },
  { value: null, label: 'Not recorded' },
];

export const caseCodeValidators: ValidatorFn[] = [
  Validators.required,
  zodValidator(createCaseSchema.shape.caseCode),
];
export const yearOfBirthValidators: ValidatorFn[] = [
  Validators.required,
  zodValidator(createCaseSchema.shape.yearOfBirth),
];
