import { ChangeDetectionStrategy, Component, DestroyRef, inject, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import {
  FormControl,
  FormGroup,
  ReactiveFormsModule,
  Validators,
  type AbstractControl,
  type ValidationErrors,
} from '@angular/forms';
import { MatButton } from '@angular/material/button';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogRef,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  ablationModalities,
  ablationModalityLabels,
  createApplicatorProfileSchema,
  type AblationModality,
  type ApplicatorProfileView,
  type CreateApplicatorProfile,
} from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { problemMessage } from '../core/problem';
import { applyFieldErrors } from '../core/server-field-errors';
import { zodValidator } from '../core/zod-validator';
import { AdminApi } from './admin-api';
import { ZoneTableEditor } from './zone-table-editor';
import { zoneTableForm, zoneTableRows } from './zone-table-form';

/** The profile to edit, or null for a new one. */
export interface ApplicatorProfileDialogData {
  profile: ApplicatorProfileView | null;
}

const shape = createApplicatorProfileSchema.shape;

/**
 * Creates or edits an applicator profile: what the applicator is (modality, gauge, lengths) and
 * its zone table. The form's names are the API's, so a refused field is marked where it is.
 */
@Component({
  selector: 'em-applicator-profiles-dialog',
  imports: [
    ReactiveFormsModule,
    MatDialogTitle,
    MatDialogContent,
    MatDialogActions,
    MatDialogClose,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatSuffix,
    MatInput,
    MatSelect,
    MatOption,
    MatButton,
    FieldError,
    ZoneTableEditor,
  ],
  templateUrl: './applicator-profiles-dialog.html',
  styleUrl: './applicator-profiles-dialog.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ApplicatorProfilesDialog {
  private readonly api = inject(AdminApi);
  private readonly dialogRef =
    inject<MatDialogRef<ApplicatorProfilesDialog, ApplicatorProfileView>>(MatDialogRef);
  protected readonly profile = inject<ApplicatorProfileDialogData>(MAT_DIALOG_DATA).profile;

  protected readonly modalityOptions = ablationModalities.map((modality) => ({
    modality,
    label: ablationModalityLabels[modality],
  }));
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');

  protected readonly form = new FormGroup({
    name: new FormControl(this.profile?.name ?? '', {
      nonNullable: true,
      validators: [Validators.required, zodValidator(shape.name)],
    }),
    modality: new FormControl<AblationModality | null>(
      this.profile?.modality ?? null,
      Validators.required,
    ),
    gaugeG: new FormControl<number | null>(this.profile?.gaugeG ?? null, [
      Validators.required,
      zodValidator(shape.gaugeG),
    ]),
    workingLengthMm: new FormControl<number | null>(this.profile?.workingLengthMm ?? null, [
      Validators.required,
      zodValidator(shape.workingLengthMm),
    ]),
    activeLengthMm: new FormControl<number | null>(this.profile?.activeLengthMm ?? null, [
      Validators.required,
      zodValidator(shape.activeLengthMm),
      shorterThanWorkingLength,
    ]),
    zoneTable: zoneTableForm(this.profile?.zoneTable ?? []),
    notes: new FormControl(this.profile?.notes ?? '', {
      nonNullable: true,
      validators: zodValidator(shape.notes),
    }),
  });

  constructor() {
    // The active length is judged against the working length: check it again when that changes.
    const { workingLengthMm, activeLengthMm } = this.form.controls;
    workingLengthMm.valueChanges
      .pipe(takeUntilDestroyed(inject(DestroyRef)))
      .subscribe(() => activeLengthMm.updateValueAndValidity());
  }

  protected save(): void {
    const body = this.form.valid ? this.request() : null;
    if (!body) {
      this.form.markAllAsTouched();
      this.errorText.set('Some values are missing or not valid; see the marked fields.');
      return;
    }
    this.isSaving.set(true);
    this.errorText.set('');
    const saving = this.profile
      ? this.api.updateApplicatorProfile(this.profile.id, body)
      : this.api.createApplicatorProfile(body);
    saving.subscribe({
      next: (saved) => this.dialogRef.close(saved),
      error: (error: unknown) => {
        this.isSaving.set(false);
        const unmatched = applyFieldErrors(this.form, error);
        this.errorText.set(
          [
            this.profile ? 'The profile was not saved.' : 'The profile was not created.',
            problemMessage(error),
            ...unmatched,
          ].join(' '),
        );
      },
    });
  }

  private request(): CreateApplicatorProfile | null {
    const { name, modality, gaugeG, workingLengthMm, activeLengthMm, notes } =
      this.form.getRawValue();
    const zoneTable = zoneTableRows(this.form.controls.zoneTable);
    if (
      modality === null ||
      gaugeG === null ||
      workingLengthMm === null ||
      activeLengthMm === null ||
      zoneTable === null
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
    };
    // Empty notes are left out, unless they clear notes the profile had.
    if (notes.trim() || this.profile?.notes) body.notes = notes;
    return body;
  }
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
