import {
  FormControl,
  FormGroup,
  Validators,
  type AbstractControl,
  type ValidationErrors,
} from '@angular/forms';
import {
  createApplicatorProfileSchema,
  zoneTableSourceLabels,
  zoneTableSources,
  type AblationModality,
  type ApplicatorProfileView,
  type CreateApplicatorProfile,
  type ZoneTableSource,
} from '@emberline/shared';
import { zodValidator } from '../core/zod-validator';
import { zoneTableForm, zoneTableRows } from './zone-table-form';

const shape = createApplicatorProfileSchema.shape;

/** The choices of where a zone table comes from, in the shared list's order. */
export const zoneTableSourceOptions = zoneTableSources.map((source) => ({
  source,
  label: zoneTableSourceLabels[source],
}));

export type ApplicatorProfileForm = ReturnType<typeof applicatorProfileForm>;

/**
 * The form of an applicator profile, filled from `profile` (or empty): what the applicator is,
 * its zone table and where that table comes from. The names are the API's, so a field the
 * server refuses is marked where it is.
 */
export function applicatorProfileForm(profile: ApplicatorProfileView | null) {
  return new FormGroup({
    name: new FormControl(profile?.name ?? '', {
      nonNullable: true,
      validators: [Validators.required, zodValidator(shape.name)],
    }),
    modality: new FormControl<AblationModality | null>(
      profile?.modality ?? null,
      Validators.required,
    ),
    gaugeG: new FormControl<number | null>(profile?.gaugeG ?? null, [
      Validators.required,
      zodValidator(shape.gaugeG),
    ]),
    workingLengthMm: new FormControl<number | null>(profile?.workingLengthMm ?? null, [
      Validators.required,
      zodValidator(shape.workingLengthMm),
    ]),
    activeLengthMm: new FormControl<number | null>(profile?.activeLengthMm ?? null, [
      Validators.required,
      zodValidator(shape.activeLengthMm),
      shorterThanWorkingLength,
    ]),
    zoneTable: zoneTableForm(profile?.zoneTable ?? []),
    zoneTableSource: new FormControl<ZoneTableSource | null>(
      profile?.zoneTableSource ?? null,
      Validators.required,
    ),
    zoneTableReference: new FormControl(profile?.zoneTableReference ?? '', {
      nonNullable: true,
      validators: zodValidator(shape.zoneTableReference),
    }),
    notes: new FormControl(profile?.notes ?? '', {
      nonNullable: true,
      validators: zodValidator(shape.notes),
    }),
  });
}

/**
 * The body for the API (POST for a new profile, PATCH for `profile`), or null while a required
 * value is empty. Empty optional texts are left out, unless they clear what the profile had.
 */
export function applicatorProfileBody(
  form: ApplicatorProfileForm,
  profile: ApplicatorProfileView | null,
): CreateApplicatorProfile | null {
  const {
    name,
    modality,
    gaugeG,
    workingLengthMm,
    activeLengthMm,
    zoneTableSource,
    zoneTableReference,
    notes,
  } = form.getRawValue();
  const zoneTable = zoneTableRows(form.controls.zoneTable);
  if (
    modality === null ||
    gaugeG === null ||
    workingLengthMm === null ||
    activeLengthMm === null ||
    zoneTable === null ||
    zoneTableSource === null
  ) {
    return null;
  }
  const body: CreateApplicatorProfile = {
    name,
    modality,
    gaugeG,
    workingLengthMm,
    activeLengthMm,
    zoneTable,
    zoneTableSource,
  };
  if (zoneTableReference.trim() || profile?.zoneTableReference) {
    body.zoneTableReference = zoneTableReference;
  }
  if (notes.trim() || profile?.notes) body.notes = notes;
  return body;
}

/** The shared schema's cross-field rule, on the field it names. */
function shorterThanWorkingLength(control: AbstractControl): ValidationErrors | null {
  const workingLengthMm: unknown = control.parent?.get('workingLengthMm')?.value;
  const activeLengthMm: unknown = control.value;
  if (typeof workingLengthMm !== 'number' || typeof activeLengthMm !== 'number') return null;
  return activeLengthMm < workingLengthMm
    ? null
    : { rule: 'The active length must be shorter than the working length' };
}
