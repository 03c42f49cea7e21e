import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  computed,
  effect,
  inject,
  input,
  output,
  signal,
} from '@angular/core';
import { takeUntilDestroyed, toSignal } from '@angular/core/rxjs-interop';
import {
  FormBuilder,
  ReactiveFormsModule,
  Validators,
  type AbstractControl,
  FormControl,
  type FormGroupDirective,
  type FormGroup,
} from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatButtonToggle, MatButtonToggleGroup } from '@angular/material/button-toggle';
import { MatCheckbox } from '@angular/material/checkbox';
import { MatError, MatFormField, MatHint, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import {
  albuminToGDl,
  albuminToGL,
  ascitesGrades,
  bilirubinToMgDl,
  bilirubinToUmolL,
  createLabPanelSchema,
  labPanelReasonSchema,
  creatinineToMgDl,
  creatinineToUmolL,
  encephalopathyGrades,
  type AlbuminUnit,
  type Ascites,
  type BilirubinUnit,
  type CaseDetail,
  type CreateLabPanelRequest,
  type CreatinineUnit,
  type Encephalopathy,
  type LabPanelView,
} from '@emberline/shared';
import { map } from 'rxjs';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage } from '../core/problem';
import { measuredValueValidator, zodValidator } from '../core/zod-validator';
import { CaseApi } from './case-api';
import { ascitesLabels, encephalopathyLabels, unitLabels } from './clinical-labels';

const shape = createLabPanelSchema.shape;

/**
 * A new laboratory panel, or the correction of one (`correcting`: the form is prefilled with its
 * values and asks for the reason; the corrected values become a new panel that supersedes it).
 * Bilirubin, albumin and creatinine are entered in SI or conventional
 * units; the value in the other unit is shown as it is typed, with the shared conversions the
 * server scores with.
 */
@Component({
  selector: 'em-lab-panel-form',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatSuffix,
    MatInput,
    MatButtonToggleGroup,
    MatButtonToggle,
    MatCheckbox,
    MatButton,
    FieldError,
  ],
  templateUrl: './lab-panel-form.html',
  styleUrl: './lab-panel-form.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LabPanelForm {
  private readonly api = inject(CaseApi);
  private readonly formBuilder = inject(FormBuilder);
  private readonly destroyRef = inject(DestroyRef);

  readonly caseId = input.required<string>();
  readonly saved = output<CaseDetail>();
  /** The panel being corrected, or null to add a new one. */
  readonly correcting = input<LabPanelView | null>(null);
  /** The correction was abandoned. */
  readonly cancelled = output();

  protected readonly title = computed(() => {
    const panel = this.correcting();
    return panel
      ? `Correct the panel taken ${localDate(new Date(panel.takenAt))}`
      : 'Add a laboratory panel';
  });
  /** Why the panel is corrected: asked for only while correcting. */
  protected readonly reason = new FormControl<string>('', {
    nonNullable: true,
    validators: [Validators.required, zodValidator(labPanelReasonSchema)],
  });

  protected readonly unitLabels = unitLabels;
  protected readonly ascitesOptions = ascitesGrades.map((value) => ({
    value,
    label: ascitesLabels[value],
  }));
  protected readonly encephalopathyOptions = encephalopathyGrades.map((value) => ({
    value,
    label: encephalopathyLabels[value],
  }));
  protected readonly today = localDate(new Date());
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly savedText = signal('');

  protected readonly form = this.formBuilder.group({
    takenAt: this.formBuilder.nonNullable.control(this.today, [
      Validators.required,
      zodValidator(shape.takenAt),
    ]),
    bilirubin: this.measured<BilirubinUnit>('umol/L', shape.bilirubin),
    albumin: this.measured<AlbuminUnit>('g/L', shape.albumin),
    inr: [null as number | null, [Validators.required, zodValidator(shape.inr)]],
    creatinine: this.measured<CreatinineUnit>('umol/L', shape.creatinine),
    sodiumMmolL: [null as number | null, [Validators.required, zodValidator(shape.sodiumMmolL)]],
    plateletsE9L: [null as number | null, [Validators.required, zodValidator(shape.plateletsE9L)]],
    ascites: [null as Ascites | null, Validators.required],
    encephalopathy: [null as Encephalopathy | null, Validators.required],
    dialysisTwiceInPastWeek: this.formBuilder.nonNullable.control(false),
  });

  private readonly bilirubin = this.live(this.form.controls.bilirubin);
  private readonly albumin = this.live(this.form.controls.albumin);
  private readonly creatinine = this.live(this.form.controls.creatinine);

  protected readonly bilirubinConversion = computed(() => {
    const { value, unit } = this.bilirubin();
    if (!isPositive(value) || !unit) return '';
    return unit === 'umol/L'
      ? `= ${decimal(bilirubinToMgDl({ value, unit }), 2)} mg/dL`
      : `= ${decimal(bilirubinToUmolL({ value, unit }), 1)} µmol/L`;
  });
  protected readonly albuminConversion = computed(() => {
    const { value, unit } = this.albumin();
    if (!isPositive(value) || !unit) return '';
    return unit === 'g/L'
      ? `= ${decimal(albuminToGDl({ value, unit }), 2)} g/dL`
      : `= ${decimal(albuminToGL({ value, unit }), 1)} g/L`;
  });
  protected readonly creatinineConversion = computed(() => {
    const { value, unit } = this.creatinine();
    if (!isPositive(value) || !unit) return '';
    return unit === 'umol/L'
      ? `= ${decimal(creatinineToMgDl({ value, unit }), 2)} mg/dL`
      : `= ${decimal(creatinineToUmolL({ value, unit }), 0)} µmol/L`;
  });

  constructor() {
    // The plausible range of a value depends on its unit: check the value again when the unit changes.
    const { bilirubin, albumin, creatinine } = this.form.controls;
    for (const group of [bilirubin, albumin, creatinine]) this.revalidateOnUnitChange(group);
    effect(() => {
      const panel = this.correcting();
      if (panel) this.prefill(panel);
    });
  }

  protected cancel(formDirective: FormGroupDirective): void {
    this.clearValues(formDirective);
    this.reason.reset('');
    this.errorText.set('');
    this.cancelled.emit();
  }

  /** The values of the panel being corrected, as entered (units included). */
  private prefill(panel: LabPanelView): void {
    this.form.reset({
      takenAt: localDate(new Date(panel.takenAt)),
      bilirubin: { ...panel.bilirubin },
      albumin: { ...panel.albumin },
      inr: panel.inr,
      creatinine: { ...panel.creatinine },
      sodiumMmolL: panel.sodiumMmolL,
      plateletsE9L: panel.plateletsE9L,
      ascites: panel.ascites,
      encephalopathy: panel.encephalopathy,
      dialysisTwiceInPastWeek: panel.dialysisTwiceInPastWeek,
    });
    this.reason.reset('');
    this.savedText.set('');
    this.errorText.set('');
  }

  protected save(formDirective: FormGroupDirective): void {
    const correcting = this.correcting();
    if (this.form.invalid || (correcting && this.reason.invalid)) {
      this.form.markAllAsTouched();
      this.reason.markAsTouched();
      this.errorText.set('Some values are missing or not plausible; see the marked fields.');
      return;
    }
    const body = this.request();
    if (!body) return;
    if (correcting) {
      this.saveCorrection(correcting, body, formDirective);
      return;
    }
    this.isSaving.set(true);
    this.errorText.set('');
    this.savedText.set('');
    this.api.addLabPanel(this.caseId(), body).subscribe({
      next: (detail) => {
        this.isSaving.set(false);
        this.clearValues(formDirective);
        this.savedText.set('Panel added; the scores are recomputed.');
        this.saved.emit(detail);
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        const unmatched = applyFieldErrors(this.form, error);
        this.errorText.set(
          ['The panel was not added.', problemMessage(error), ...unmatched].join(' '),
        );
      },
    });
  }

  private saveCorrection(
    panel: LabPanelView,
    body: CreateLabPanelRequest,
    formDirective: FormGroupDirective,
  ): void {
    // The same day as the panel's: keep its exact time, so the order of the panels stays.
    const takenAt =
      body.takenAt === localDate(new Date(panel.takenAt)) ? panel.takenAt : body.takenAt;
    this.isSaving.set(true);
    this.errorText.set('');
    this.api
      .correctLabPanel(this.caseId(), panel.id, { ...body, takenAt, reason: this.reason.value })
      .subscribe({
        next: (detail) => {
          this.isSaving.set(false);
          this.clearValues(formDirective);
          this.reason.reset('');
          this.savedText.set('Panel corrected; the scores are recomputed.');
          this.saved.emit(detail);
        },
        error: (error: unknown) => {
          this.isSaving.set(false);
          const unmatched = applyFieldErrors(this.form, error);
          this.errorText.set(
            ['The correction was not saved.', problemMessage(error), ...unmatched].join(' '),
          );
        },
      });
  }

  private request(): CreateLabPanelRequest | null {
    const value = this.form.getRawValue();
    const { bilirubin, albumin, creatinine } = value;
    if (
      bilirubin.value === null ||
      albumin.value === null ||
      creatinine.value === null ||
      value.inr === null ||
      value.sodiumMmolL === null ||
      value.plateletsE9L === null ||
      value.ascites === null ||
      value.encephalopathy === null
    ) {
      return null;
    }
    return {
      takenAt: value.takenAt,
      bilirubin: { value: bilirubin.value, unit: bilirubin.unit },
      albumin: { value: albumin.value, unit: albumin.unit },
      inr: value.inr,
      creatinine: { value: creatinine.value, unit: creatinine.unit },
      sodiumMmolL: value.sodiumMmolL,
      plateletsE9L: value.plateletsE9L,
      ascites: value.ascites,
      encephalopathy: value.encephalopathy,
      dialysisTwiceInPastWeek: value.dialysisTwiceInPastWeek,
    };
  }

  /**
   * Empties the values for the next panel; keeps the units and the date as they were. Resets
   * through the directive so that its "submitted" state goes too and no field shows an error.
   */
  private clearValues(formDirective: FormGroupDirective): void {
    const value = this.form.getRawValue();
    formDirective.resetForm({
      takenAt: value.takenAt,
      bilirubin: { value: null, unit: value.bilirubin.unit },
      albumin: { value: null, unit: value.albumin.unit },
      inr: null,
      creatinine: { value: null, unit: value.creatinine.unit },
      sodiumMmolL: null,
      plateletsE9L: null,
      ascites: null,
      encephalopathy: null,
      dialysisTwiceInPastWeek: false,
    });
  }

  private measured<U extends string>(
    unit: U,
    schema: Parameters<typeof measuredValueValidator>[0],
  ) {
    return this.formBuilder.nonNullable.group({
      value: this.formBuilder.control<number | null>(null, [
        Validators.required,
        measuredValueValidator(schema),
      ]),
      unit: this.formBuilder.nonNullable.control<U>(unit),
    });
  }

  /** The measured value and its unit as a signal, for the live conversion. */
  private live<U>(group: FormGroup<{ value: FormControl<number | null>; unit: FormControl<U> }>) {
    return toSignal(group.valueChanges.pipe(map(() => group.getRawValue())), {
      initialValue: group.getRawValue(),
    });
  }

  private revalidateOnUnitChange(group: AbstractControl): void {
    group
      .get('unit')
      ?.valueChanges.pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe(() => group.get('value')?.updateValueAndValidity());
  }
}

function isPositive(value: number | null | undefined): value is number {
  return typeof value === 'number' && Number.isFinite(value) && value > 0;
}

function decimal(value: number, digits: number): string {
  return new Intl.NumberFormat('en', { maximumFractionDigits: digits }).format(value);
}

/** YYYY-MM-DD of a date in the browser's time zone, as `<input type="date">` takes it. */
function localDate(date: Date): string {
  const month = String(date.getMonth() + 1).padStart(2, '0');
  const day = String(date.getDate()).padStart(2, '0');
  return `${date.getFullYear()}-${month}-${day}`;
}
