import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogRef,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import type { Observable } from 'rxjs';
import { FieldError } from '../core/field-error';
import { textRequired } from '../decisions/text-required';
import { refusalText } from './refusal-text';

export interface ReasonDialogData {
  title: string;
  /** What happens when confirmed, in words (e.g. who is e-mailed). */
  message: string;
  reasonLabel: string;
  confirmLabel: string;
  /** Sends the reason; the dialog closes with true once it succeeds, and shows a refusal. */
  send: (reason: string) => Observable<unknown>;
}

/**
 * Asks the reason for an act that is kept with its reason (an override, a cancellation), sends
 * it, and shows the server's refusal without losing what was typed.
 */
@Component({
  selector: 'em-reason-dialog',
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
    MatInput,
    MatButton,
    FieldError,
  ],
  template: `
    <h2 mat-dialog-title>{{ data.title }}</h2>
    <form [formGroup]="form" (ngSubmit)="confirm()">
      <mat-dialog-content>
        <p>{{ data.message }}</p>
        <mat-form-field>
          <mat-label>{{ data.reasonLabel }}</mat-label>
          <textarea
            matInput
            id="reason-text"
            formControlName="reason"
            rows="3"
            required
            cdkFocusInitial
          ></textarea>
          <mat-hint>Kept with the record, with your name and the time</mat-hint>
          @if (form.controls.reason.invalid) {
            <mat-error>{{ form.controls.reason.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
        @if (errorText()) {
          <p class="em-error-text" role="alert">{{ errorText() }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button mat-button type="button" [mat-dialog-close]="false">Back</button>
        <button mat-flat-button type="submit" [disabled]="isSaving()">
          {{ data.confirmLabel }}
        </button>
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
export class ReasonDialog {
  private readonly dialogRef = inject<MatDialogRef<ReasonDialog, boolean>>(MatDialogRef);
  protected readonly data = inject<ReasonDialogData>(MAT_DIALOG_DATA);
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly form = inject(NonNullableFormBuilder).group({
    reason: ['', textRequired],
  });

  protected confirm(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.isSaving.set(true);
    this.errorText.set('');
    this.data.send(this.form.controls.reason.value.trim()).subscribe({
      next: () => this.dialogRef.close(true),
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.errorText.set(refusalText(this.form, error));
      },
    });
  }
}
