import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  input,
  output,
  signal,
} from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  caseStatusLabels,
  primaryDiagnosisLabels,
  type CaseDetail,
  type PrimaryDiagnosis,
  type Sex,
  type UpdateCaseRequest,
} from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage } from '../core/problem';
import { CaseApi } from './case-api';
import { CaseClinicalFields } from './case-clinical-fields';
import { caseCodeValidators, yearOfBirthValidators } from './case-form-options';
import { ecogLabels, findingLabel, sexLabels } from './clinical-labels';

type EditableStatus = 'draft' | 'ready-for-board';

/** The case's own fields, saved with PATCH; a plain list of values for those who may not edit. */
@Component({
  selector: 'em-case-details-form',
  imports: [
    ReactiveFormsModule,
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
  templateUrl: './case-details-form.html',
  styleUrl: './case-details-form.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CaseDetailsForm {
  private readonly api = inject(CaseApi);

  readonly detail = input.required<CaseDetail>();
  readonly saved = output<CaseDetail>();

  protected readonly statusLabels = caseStatusLabels;
  protected readonly sexLabels = sexLabels;
  protected readonly diagnosisLabels = primaryDiagnosisLabels;
  protected readonly findingLabel = findingLabel;
  protected readonly ecogText = computed(() => {
    const ecog = this.detail().ecogPerformanceStatus;
    return ecog === null ? 'Not recorded' : (ecogLabels[ecog] ?? String(ecog));
  });
  protected readonly editableStatuses: readonly EditableStatus[] = ['draft', 'ready-for-board'];
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly savedText = signal('');

  protected readonly form = inject(FormBuilder).group({
    caseCode: ['', caseCodeValidators],
    yearOfBirth: [null as number | null, yearOfBirthValidators],
    sex: [null as Sex | null, Validators.required],
    primaryDiagnosis: [null as PrimaryDiagnosis | null, Validators.required],
    ecogPerformanceStatus: [null as number | null],
    hasVascularInvasion: [null as boolean | null],
    hasExtrahepaticSpread: [null as boolean | null],
    status: ['draft' as EditableStatus, Validators.required],
  });

  constructor() {
    // Follow the case as other parts of the file change it, but never over unsaved typing.
    effect(() => this.fillFrom(this.detail(), { overEdits: false }));
  }

  protected isStatusEditable(): boolean {
    return (this.editableStatuses as readonly string[]).includes(this.detail().status);
  }

  protected save(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const body = this.changedFields();
    if (Object.keys(body).length === 0) {
      this.savedText.set('Nothing to save: no field has changed.');
      return;
    }
    this.isSaving.set(true);
    this.errorText.set('');
    this.savedText.set('');
    this.api.update(this.detail().id, body).subscribe({
      next: (detail) => {
        this.isSaving.set(false);
        this.fillFrom(detail, { overEdits: true });
        this.savedText.set('Saved.');
        this.saved.emit(detail);
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        const unmatched = applyFieldErrors(this.form, error);
        this.errorText.set(['Not saved.', problemMessage(error), ...unmatched].join(' '));
      },
    });
  }

  protected discard(): void {
    this.fillFrom(this.detail(), { overEdits: true });
    this.errorText.set('');
    this.savedText.set('');
  }

  private changedFields(): UpdateCaseRequest {
    const body: Record<string, unknown> = {};
    const value = this.form.getRawValue();
    for (const [name, control] of Object.entries(this.form.controls)) {
      if (control.dirty && control.enabled) body[name] = value[name as keyof typeof value];
    }
    return body as UpdateCaseRequest;
  }

  private fillFrom(detail: CaseDetail, options: { overEdits: boolean }): void {
    if (this.form.dirty && !options.overEdits) return;
    this.form.reset({
      caseCode: detail.caseCode,
      yearOfBirth: detail.yearOfBirth,
      sex: detail.sex,
      primaryDiagnosis: detail.primaryDiagnosis,
      ecogPerformanceStatus: detail.ecogPerformanceStatus,
      hasVascularInvasion: detail.hasVascularInvasion,
      hasExtrahepaticSpread: detail.hasExtrahepaticSpread,
      status: detail.status === 'ready-for-board' ? 'ready-for-board' : 'draft',
    });
    if (detail.permissions.canEdit) {
      this.form.enable();
      if (!this.isStatusEditable()) this.form.controls.status.disable();
    } else {
      this.form.disable();
    }
  }
}
