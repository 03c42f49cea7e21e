import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { FormControl, ReactiveFormsModule, Validators } from '@angular/forms';
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

export interface ConfirmDialogData {
  title: string;
  message: string;
  confirmLabel: string;
  /** Everything that goes with the action, one line each (listed under the message). */
  items?: readonly string[];
  /**
   * Why the action cannot be done now: shown instead of the confirmation, which is disabled. The
   * dialog then only closes.
   */
  blockedReason?: string;
  /**
   * Asks for a reason (kept with the record): the label of the field. The dialog then closes
   * with the trimmed reason instead of true, and confirms only once one is given.
   */
  reasonLabel?: string;
  /** The longest reason accepted (500 by default: the server's limit for lab panels). */
  reasonMaxLength?: number;
}

/** What the dialog closes with: true (or the reason, when one is asked for); false or undefined when not confirmed. */
export type ConfirmDialogResult = boolean | string | undefined;

/**
 * Asks before an action that cannot be undone, naming everything that goes with it; closes with
 * true when confirmed (the reason when it asks for one). The one confirmation of the case file:
 * deleting a draft, a plan, an annotation, a lesion, a series, withdrawing a lab panel.
 */
@Component({
  selector: 'em-confirm-dialog',
  imports: [
    MatDialogTitle,
    MatDialogContent,
    MatDialogActions,
    MatDialogClose,
    MatButton,
    MatFormField,
    MatLabel,
    MatInput,
    MatHint,
    MatError,
    ReactiveFormsModule,
  ],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h2 mat-dialog-title>{{ data.title }}</h2>
    <mat-dialog-content>
      <p>{{ data.message }}</p>
      @if (data.items?.length) {
        <ul class="confirm-items" aria-label="What goes with it">
          @for (item of data.items; track $index) {
            <li>{{ item }}</li>
          }
        </ul>
      }
      @if (data.blockedReason) {
        <p class="em-error-text" role="alert">{{ data.blockedReason }}</p>
      }
      @if (data.reasonLabel && !data.blockedReason) {
        <mat-form-field class="reason">
          <mat-label>{{ data.reasonLabel }}</mat-label>
          <textarea
            matInput
            id="confirm-reason"
            rows="2"
            [attr.maxlength]="maxLength"
            [formControl]="reasonControl"
          ></textarea>
          <mat-hint align="end">{{ reason().length }} / {{ maxLength }}</mat-hint>
          @if (reasonControl.invalid) {
            <mat-error>{{
              reasonControl.hasError('maxlength')
                ? 'At most ' + maxLength + ' characters'
                : 'Give the reason'
            }}</mat-error>
          }
        </mat-form-field>
      }
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      @if (data.blockedReason) {
        <button mat-button type="button" [mat-dialog-close]="false">Close</button>
        <button mat-flat-button type="button" disabled>{{ data.confirmLabel }}</button>
      } @else {
        <button mat-button type="button" [mat-dialog-close]="false">Cancel</button>
        <button mat-flat-button type="button" [disabled]="!canConfirm()" (click)="confirm()">
          {{ data.confirmLabel }}
        </button>
      }
    </mat-dialog-actions>
  `,
  styles: `
    .confirm-items {
      margin: 0 0 1rem;
      padding-left: 1.25rem;
    }

    .reason {
      width: 100%;
    }
  `,
})
export class ConfirmDialog {
  protected readonly data = inject<ConfirmDialogData>(MAT_DIALOG_DATA);
  private readonly dialogRef =
    inject<MatDialogRef<ConfirmDialog, ConfirmDialogResult>>(MatDialogRef);

  protected readonly maxLength = this.data.reasonMaxLength ?? 500;
  protected readonly reasonControl = new FormControl('', {
    nonNullable: true,
    validators: [
      Validators.required,
      Validators.pattern(/\S/),
      Validators.maxLength(this.maxLength),
    ],
  });
  protected readonly reason = toSignal(this.reasonControl.valueChanges, { initialValue: '' });
  protected readonly trimmedReason = computed(() => this.reason().trim());
  protected readonly canConfirm = computed(
    () =>
      !this.data.reasonLabel ||
      (this.trimmedReason().length > 0 && this.reason().length <= this.maxLength),
  );

  protected confirm(): void {
    if (!this.canConfirm()) {
      this.reasonControl.markAsTouched();
      return;
    }
    this.dialogRef.close(this.data.reasonLabel ? this.trimmedReason() : true);
  }
}
