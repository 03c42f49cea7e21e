import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import {
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogRef,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { createUserSchema, passwordSchema, type AdminUserView } from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage } from '../core/problem';
import { zodValidator } from '../core/zod-validator';
import { AdminApi } from './admin-api';
import { chosenRoles, roleChoice, roleOptions } from './role-choice';

/** Creates an account; with a password it signs in locally, without one only through SSO. */
@Component({
  selector: 'em-user-create-dialog',
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
    MatCheckbox,
    MatButton,
    FieldError,
  ],
  template: `
    <h2 mat-dialog-title>New account</h2>
    <form [formGroup]="form" (ngSubmit)="create()">
      <mat-dialog-content>
        <mat-form-field>
          <mat-label>E-mail address</mat-label>
          <input
            matInput
            id="new-user-email"
            type="email"
            formControlName="email"
            autocomplete="off"
          />
          @if (form.controls.email.invalid) {
            <mat-error>{{ form.controls.email.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Display name</mat-label>
          <input matInput id="new-user-name" formControlName="displayName" autocomplete="off" />
          @if (form.controls.displayName.invalid) {
            <mat-error>{{ form.controls.displayName.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Initial password</mat-label>
          <input
            matInput
            id="new-user-password"
            type="password"
            formControlName="password"
            autocomplete="new-password"
          />
          <mat-hint
            >At least 12 characters. Leave empty for an account that signs in only through hospital
            SSO.</mat-hint
          >
          @if (form.controls.password.invalid) {
            <mat-error>{{ form.controls.password.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
        <fieldset formGroupName="roles">
          <legend>Roles</legend>
          @for (option of roleOptions; track option.role) {
            <mat-checkbox [formControlName]="option.role">{{ option.label }}</mat-checkbox>
          }
        </fieldset>
        @if (errorText()) {
          <p class="em-error-text" role="alert">{{ errorText() }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button mat-button type="button" mat-dialog-close>Cancel</button>
        <button mat-flat-button type="submit" [disabled]="isSaving()">Create account</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    mat-dialog-content {
      display: flex;
      flex-direction: column;
      gap: 4px;
    }

    fieldset {
      display: flex;
      flex-direction: column;
      border: 1px solid var(--mat-sys-outline-variant);
      border-radius: var(--mat-sys-corner-small);
      margin-top: 12px;
    }

    legend {
      font: var(--mat-sys-title-small);
      padding: 0 4px;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class UserCreateDialog {
  private readonly api = inject(AdminApi);
  private readonly dialogRef = inject<MatDialogRef<UserCreateDialog, AdminUserView>>(MatDialogRef);

  protected readonly roleOptions = roleOptions;
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly form = inject(NonNullableFormBuilder).group({
    email: ['', [Validators.required, zodValidator(createUserSchema.shape.email)]],
    displayName: ['', [Validators.required, zodValidator(createUserSchema.shape.displayName)]],
    password: ['', zodValidator(passwordSchema)],
    roles: roleChoice([]),
  });

  protected create(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const { email, displayName, password } = this.form.getRawValue();
    this.isSaving.set(true);
    this.errorText.set('');
    this.api
      .createUser({
        email,
        displayName,
        roles: chosenRoles(this.form.controls.roles),
        password: password || undefined,
      })
      .subscribe({
        next: (created) => this.dialogRef.close(created),
        error: (error: unknown) => {
          this.isSaving.set(false);
          const unmatched = applyFieldErrors(this.form, error);
          this.errorText.set(
            ['The account was not created.', problemMessage(error), ...unmatched].join(' '),
          );
        },
      });
  }
}
