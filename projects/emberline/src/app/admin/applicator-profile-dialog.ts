import { ChangeDetectionStrategy, Component, DestroyRef, inject, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { ReactiveFormsModule } from '@angular/forms';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  ablationModalities,
  ablationModalityLabels,
  type ApplicatorProfileView,
} from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { AdminApi } from './admin-api';
import {
  applicatorProfileBody,
  applicatorProfileForm,
  zoneTableSourceOptions,
} from './applicator-profile-form';
import { profileSaveRefusal } from './profile-save-refusal';
import { ProfileDialogShell } from './profile-dialog-shell';
import { ZoneTableEditor } from './zone-table-editor';

/** The profile to edit, or null for a new one. */
export interface ApplicatorProfileDialogData {
  profile: ApplicatorProfileView | null;
}

/**
 * Creates or edits an applicator profile: what the applicator is (modality, gauge, lengths), its
 * zone table and where the table comes from. Saving sends the whole profile (POST, or PATCH for
 * an edit); an edit of a version that assessments used becomes the profile's next version.
 */
@Component({
  selector: 'em-applicator-profile-dialog',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatSuffix,
    MatInput,
    MatSelect,
    MatOption,
    FieldError,
    ProfileDialogShell,
    ZoneTableEditor,
  ],
  templateUrl: './applicator-profile-dialog.html',
  styleUrl: './applicator-profile-dialog.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ApplicatorProfileDialog {
  private readonly api = inject(AdminApi);
  private readonly dialogRef =
    inject<MatDialogRef<ApplicatorProfileDialog, ApplicatorProfileView>>(MatDialogRef);
  protected readonly profile = inject<ApplicatorProfileDialogData>(MAT_DIALOG_DATA).profile;

  protected readonly modalityOptions = ablationModalities.map((modality) => ({
    modality,
    label: ablationModalityLabels[modality],
  }));
  protected readonly sourceOptions = zoneTableSourceOptions;
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly form = applicatorProfileForm(this.profile);

  constructor() {
    // The active length is judged against the working length: check it again when that changes.
    const { workingLengthMm, activeLengthMm } = this.form.controls;
    workingLengthMm.valueChanges
      .pipe(takeUntilDestroyed(inject(DestroyRef)))
      .subscribe(() => activeLengthMm.updateValueAndValidity());
  }

  protected save(): void {
    const body = this.form.valid ? applicatorProfileBody(this.form, this.profile) : null;
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
        this.errorText.set(profileSaveRefusal(this.form, error, this.profile !== null));
      },
    });
  }
}
