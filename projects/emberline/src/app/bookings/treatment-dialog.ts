import { ChangeDetectionStrategy, Component, DestroyRef, inject, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import {
  NonNullableFormBuilder,
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
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  complicationGradeLabels,
  complicationGrades,
  recordTreatmentSchema,
  type ComplicationGrade,
  type RecordTreatment,
} from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { textRequired } from '../decisions/text-required';
import { localDateTimeWithOffset } from '../meetings/local-date-time';
import { BookingApi } from './booking-api';
import { localInputValue } from './booking-dialog';
import { complicationClassification } from './complication-grades';
import { refusalText } from './refusal-text';

export interface TreatmentDialogData {
  caseId: string;
  caseCode: string;
  /** When the procedure was booked to start: the default for "performed at". */
  startsAt: string;
  /** The selected plan's applicators, offered as what was used. */
  applicators: readonly { name: string; version: number }[];
}

/**
 * The operator marks the procedure done: when it was performed, the applicators used, any
 * deviation from the plan, and the complication grade (Clavien–Dindo). A graded complication
 * needs its description. Closes with true once recorded.
 */
@Component({
  selector: 'em-treatment-dialog',
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
  ],
  templateUrl: './treatment-dialog.html',
  styleUrl: './booking-dialog.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class TreatmentDialog {
  private readonly api = inject(BookingApi);
  private readonly dialogRef = inject<MatDialogRef<TreatmentDialog, boolean>>(MatDialogRef);
  protected readonly data = inject<TreatmentDialogData>(MAT_DIALOG_DATA);

  protected readonly grades = complicationGrades;
  protected readonly gradeLabels = complicationGradeLabels;
  protected readonly classification = complicationClassification;
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly isGraded = signal(false);

  protected readonly form = inject(NonNullableFormBuilder).group({
    performedAt: [localInputValue(performedDefault(this.data.startsAt)), Validators.required],
    applicatorsUsed: [
      this.data.applicators
        .map((applicator) => `${applicator.name} (v${String(applicator.version)})`)
        .join(', '),
      textRequired,
    ],
    deviation: [''],
    complicationGrade: ['none' as ComplicationGrade, Validators.required],
    complicationNote: ['', noteWhenGraded],
  });

  constructor() {
    this.form.controls.complicationGrade.valueChanges
      .pipe(takeUntilDestroyed(inject(DestroyRef)))
      .subscribe((grade) => {
        this.isGraded.set(grade !== 'none');
        this.form.controls.complicationNote.updateValueAndValidity();
      });
  }

  protected save(): void {
    this.errorText.set('');
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const value = this.form.getRawValue();
    const performedAt = localDateTimeWithOffset(value.performedAt);
    if (!performedAt) {
      this.form.controls.performedAt.setErrors({ rule: 'Give the date and time' });
      return;
    }
    const body: RecordTreatment = {
      performedAt,
      applicatorsUsed: value.applicatorsUsed.trim(),
      complicationGrade: value.complicationGrade,
    };
    if (value.deviation.trim()) body.deviation = value.deviation.trim();
    if (value.complicationNote.trim()) body.complicationNote = value.complicationNote.trim();
    if (!recordTreatmentSchema.safeParse(body).success) {
      this.form.markAllAsTouched();
      return;
    }
    this.isSaving.set(true);
    this.api.recordTreatment(this.data.caseId, body).subscribe({
      next: () => this.dialogRef.close(true),
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.errorText.set(refusalText(this.form, error));
      },
    });
  }
}

/** The booked start, or now when the start is still ahead (a procedure is recorded once done). */
function performedDefault(startsAt: string): string {
  const start = Date.parse(startsAt);
  return Number.isNaN(start) || start > Date.now() ? new Date().toISOString() : startsAt;
}

/** The note is required once a complication is graded (the shared schema's rule). */
function noteWhenGraded(control: AbstractControl): ValidationErrors | null {
  const grade: unknown = control.parent?.get('complicationGrade')?.value;
  if (grade === undefined || grade === 'none') return null;
  return textRequired(control) ? { rule: 'Describe the complication' } : null;
}
