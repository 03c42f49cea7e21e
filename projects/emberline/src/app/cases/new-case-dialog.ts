import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import {
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogRef,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  specialtyLabels,
  type CaseDetail,
  type CreateCaseRequest,
  type PrimaryDiagnosis,
  type Sex,
} from '@emberline/shared';
import { AuthSession } from '../core/auth-session';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage } from '../core/problem';
import { CaseApi } from './case-api';
import { CaseClinicalFields } from './case-clinical-fields';
import { caseCodeValidators, yearOfBirthValidators } from './case-form-options';

/** Opens a new case on one of the presenting physician's boards; closes with the created case. */
@Component({
  selector: 'em-new-case-dialog',
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
    MatSelect,
    MatOption,
    MatButton,
    FieldError,
    CaseClinicalFields,
  ],
  templateUrl: './new-case-dialog.html',
  styleUrl: './new-case-dialog.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class NewCaseDialog {
  private readonly api = inject(CaseApi);
  private readonly dialogRef = inject<MatDialogRef<NewCaseDialog, CaseDetail>>(MatDialogRef);

  protected readonly boards = inject(AuthSession).user()?.boards ?? [];
  protected readonly specialtyLabels = specialtyLabels;
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');

  protected readonly form = inject(FormBuilder).group({
    caseCode: ['', caseCodeValidators],
    boardId: [this.boards.length === 1 ? (this.boards[0]?.boardId ?? '') : '', Validators.required],
    yearOfBirth: [null as number | null, yearOfBirthValidators],
    sex: [null as Sex | null, Validators.required],
    primaryDiagnosis: [null as PrimaryDiagnosis | null, Validators.required],
    ecogPerformanceStatus: [null as number | null],
    hasVascularInvasion: [null as boolean | null],
    hasExtrahepaticSpread: [null as boolean | null],
  });

  protected create(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const value = this.form.getRawValue();
    const body: CreateCaseRequest = {
      caseCode: value.caseCode ?? '',
      boardId: value.boardId ?? '',
      yearOfBirth: value.yearOfBirth ?? 0,
      sex: value.sex ?? 'unknown',
      primaryDiagnosis: value.primaryDiagnosis ?? 'other',
      ecogPerformanceStatus: value.ecogPerformanceStatus,
      hasVascularInvasion: value.hasVascularInvasion,
      hasExtrahepaticSpread: value.hasExtrahepaticSpread,
    };
    this.isSaving.set(true);
    this.errorText.set('');
    this.api.create(body).subscribe({
      next: (created) => this.dialogRef.close(created),
      error: (error: unknown) => {
        this.isSaving.set(false);
        const unmatched = applyFieldErrors(this.form, error);
        this.errorText.set(
          ['The case was not created.', problemMessage(error), ...unmatched].join(' '),
        );
      },
    });
  }
}
