import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
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
import { updateThresholdSchema, type ThresholdView } from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { zodValidator } from '../core/zod-validator';
import { refusalText } from '../bookings/refusal-text';
import { textRequired } from '../decisions/text-required';
import { AdminApi } from './admin-api';

const fields = updateThresholdSchema.shape;

/** Changes one checklist threshold; the source of the new value is required. */
@Component({
  selector: 'em-threshold-dialog',
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
    MatButton,
    FieldError,
  ],
  template: `
    <h2 mat-dialog-title>{{ data.label }}</h2>
    <form [formGroup]="form" (ngSubmit)="save()">
      <mat-dialog-content>
        <mat-form-field>
          <mat-label>Value</mat-label>
          <input matInput id="threshold-value" type="number" step="any" formControlName="value" />
          <span matTextSuffix>{{ data.unit }}</span>
          @if (form.controls.value.invalid) {
            <mat-error>{{ form.controls.value.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Source of the value</mat-label>
          <textarea
            matInput
            id="threshold-source"
            formControlName="source"
            rows="2"
            required
          ></textarea>
          <mat-hint>A publication, or the local protocol by its name and version</mat-hint>
          @if (form.controls.source.invalid) {
            <mat-error>{{ form.controls.source.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
        @if (errorText()) {
          <p class="em-error-text" role="alert">{{ errorText() }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button mat-button type="button" mat-dialog-close>Cancel</button>
        <button mat-flat-button type="submit" [disabled]="isSaving()">Save</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    mat-dialog-content {
      display: flex;
      flex-direction: column;
      gap: 4px;
      min-width: min(420px, 80vw);
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ThresholdDialog {
  private readonly api = inject(AdminApi);
  private readonly dialogRef = inject<MatDialogRef<ThresholdDialog, ThresholdView>>(MatDialogRef);
  protected readonly data = inject<ThresholdView>(MAT_DIALOG_DATA);
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly form = inject(NonNullableFormBuilder).group({
    value: [this.data.value, [Validators.required, zodValidator(fields.value)]],
    // A new value needs its own source: the field starts empty.
    source: ['', [textRequired, zodValidator(fields.source)]],
  });

  protected save(): void {
    this.errorText.set('');
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const value = this.form.getRawValue();
    this.isSaving.set(true);
    this.api
      .updateThreshold(this.data.key, { value: Number(value.value), source: value.source.trim() })
      .subscribe({
        next: (saved) => this.dialogRef.close(saved),
        error: (error: unknown) => {
          this.isSaving.set(false);
          this.errorText.set(refusalText(this.form, error));
        },
      });
  }
}
