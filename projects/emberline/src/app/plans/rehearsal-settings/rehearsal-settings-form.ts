import {
  FormControl,
  FormGroup,
  Validators,
  type AbstractControl,
  type ValidationErrors,
  type ValidatorFn,
} from '@angular/forms';
import {
  DEFAULT_REHEARSAL_SETTINGS,
  meshCellMm,
  rehearsalMeshResolutions,
  rehearsalSettingsSchema,
  type RehearsalMeshResolution,
  type RehearsalSettings,
} from '@emberline/shared';
import type { z } from 'zod';
import { problemOf } from '../../core/problem';
import { zodIssueText, zodValidator } from '../../core/zod-validator';

const shape = rehearsalSettingsSchema.shape;
const breathingShape = shape.breathing.shape;
const materialShape = shape.material.shape;

/** Pascals in a kilopascal: the API stores Pa, the board reads liver stiffness in kPa. */
const PA_PER_KPA = 1000;

export const rehearsalResolutions = rehearsalMeshResolutions;

/** "medium (cells of about 6 mm)". */
export function resolutionLabel(resolution: RehearsalMeshResolution): string {
  return `${resolution} (cells of about ${meshCellMm[resolution]} mm)`;
}

/** The settings' numbers for display: at most three decimals, no trailing zeros. */
export function compactNumber(value: number): string {
  return String(Number(value.toFixed(3)));
}

/** One setting as the panel lists it: its name, its value in force and what it means. */
export interface RehearsalSettingLine {
  key: string;
  label: string;
  value: string;
  defaultValue: string;
  explanation: string;
}

/** The settings in the order and words the panel lists them. */
export function settingLines(
  settings: RehearsalSettings,
  defaults: RehearsalSettings,
): RehearsalSettingLine[] {
  const line = (
    key: string,
    label: string,
    format: (value: RehearsalSettings) => string,
    explanation: string,
  ): RehearsalSettingLine => ({
    key,
    label,
    value: format(settings),
    defaultValue: format(defaults),
    explanation,
  });
  return [
    line(
      'resolution',
      'Mesh resolution',
      (value) => resolutionLabel(value.resolution),
      'How finely the liver is divided into tetrahedra for the simulation: a finer mesh follows ' +
        'its shape more closely and takes longer to run.',
    ),
    line(
      'amplitudeMm',
      'Breathing amplitude',
      (value) => `${compactNumber(value.breathing.amplitudeMm)} mm`,
      'How far the top of the liver travels, head to foot, between breathing out and breathing in.',
    ),
    line(
      'periodS',
      'Breathing period',
      (value) => `${compactNumber(value.breathing.periodS)} s`,
      'The time one whole breath takes.',
    ),
    line(
      'shapeN',
      'Breathing shape n',
      (value) => `n = ${compactNumber(value.breathing.shapeN)}`,
      'The form of the breathing curve: 1 is an even swing; a larger n keeps the liver longer ' +
        'near its breathed-out position, with a shorter breath in.',
    ),
    line(
      'youngsModulusKPa',
      'Liver stiffness (Young’s modulus)',
      (value) => `${compactNumber(value.material.youngsModulusPa / PA_PER_KPA)} kPa`,
      'How firm the liver tissue is: the lower the value, the more the liver gives way in front ' +
        'of the needle. Fibrotic or cirrhotic livers are stiffer.',
    ),
    line(
      'poissonRatio',
      'Poisson’s ratio',
      (value) => compactNumber(value.material.poissonRatio),
      'How nearly the tissue keeps its volume when pressed: 0.5 would not change volume at all.',
    ),
  ];
}

/**
 * A validator of a value typed in one unit against a shared schema in another: the kPa field of
 * the liver's stiffness against the schema's pascals. The limits are told in the unit typed.
 */
export function scaledZodValidator(schema: z.ZodType, factor: number, unit: string): ValidatorFn {
  return (control: AbstractControl): ValidationErrors | null => {
    const value: unknown = control.value;
    if (value === null || value === '' || value === undefined) return null;
    if (typeof value !== 'number' || !Number.isFinite(value)) return { rule: 'A number' };
    const result = schema.safeParse(toScaled(value, factor));
    if (result.success) return null;
    const issue = result.error.issues[0];
    if (issue?.code === 'too_small') {
      return { rule: `At least ${compactNumber(Number(issue.minimum) / factor)} ${unit}` };
    }
    if (issue?.code === 'too_big') {
      return { rule: `At most ${compactNumber(Number(issue.maximum) / factor)} ${unit}` };
    }
    return { rule: zodIssueText(issue) };
  };
}

/** value × factor without the binary fraction's tail (6.2 kPa is 6200 Pa, not 6200.000000000001). */
function toScaled(value: number, factor: number): number {
  return Number((value * factor).toPrecision(12));
}

/** "0 to 40 mm; default 12 mm": the shared schema's range and the default, in the field's unit. */
function hintOf(schema: z.ZodNumber, unit: string, defaultValue: number, factor = 1): string {
  const suffix = unit ? ` ${unit}` : '';
  const limit = (value: number | null) => (value === null ? '…' : compactNumber(value / factor));
  return (
    `${limit(schema.minValue)} to ${limit(schema.maxValue)}${suffix}; ` +
    `default ${compactNumber(defaultValue / factor)}${suffix}`
  );
}

/** The hint under each number field of the form. */
export const rehearsalFieldHints = {
  amplitudeMm: hintOf(
    breathingShape.amplitudeMm,
    'mm',
    DEFAULT_REHEARSAL_SETTINGS.breathing.amplitudeMm,
  ),
  periodS: hintOf(breathingShape.periodS, 's', DEFAULT_REHEARSAL_SETTINGS.breathing.periodS),
  shapeN: hintOf(breathingShape.shapeN, '', DEFAULT_REHEARSAL_SETTINGS.breathing.shapeN),
  youngsModulusKPa: hintOf(
    materialShape.youngsModulusPa,
    'kPa',
    DEFAULT_REHEARSAL_SETTINGS.material.youngsModulusPa,
    PA_PER_KPA,
  ),
  poissonRatio: hintOf(
    materialShape.poissonRatio,
    '',
    DEFAULT_REHEARSAL_SETTINGS.material.poissonRatio,
  ),
  resolution: `default ${resolutionLabel(DEFAULT_REHEARSAL_SETTINGS.resolution)}`,
} as const;

const number = (schema: z.ZodType, initial: number) =>
  new FormControl<number | null>(initial, [Validators.required, zodValidator(schema)]);

/** The presenter's form, flat, in the units the panel shows (stiffness in kPa). */
export function rehearsalSettingsForm(settings: RehearsalSettings) {
  return new FormGroup({
    resolution: new FormControl<RehearsalMeshResolution>(settings.resolution, {
      nonNullable: true,
      validators: [Validators.required, zodValidator(shape.resolution)],
    }),
    amplitudeMm: number(breathingShape.amplitudeMm, settings.breathing.amplitudeMm),
    periodS: number(breathingShape.periodS, settings.breathing.periodS),
    shapeN: number(breathingShape.shapeN, settings.breathing.shapeN),
    youngsModulusKPa: new FormControl<number | null>(
      compactKPa(settings.material.youngsModulusPa),
      [Validators.required, scaledZodValidator(materialShape.youngsModulusPa, PA_PER_KPA, 'kPa')],
    ),
    poissonRatio: number(materialShape.poissonRatio, settings.material.poissonRatio),
  });
}
export type RehearsalSettingsForm = ReturnType<typeof rehearsalSettingsForm>;

/** The values the form shows for `settings` (to reset it to them). */
export function formValueOf(settings: RehearsalSettings): RehearsalSettingsForm['value'] {
  return {
    resolution: settings.resolution,
    amplitudeMm: settings.breathing.amplitudeMm,
    periodS: settings.breathing.periodS,
    shapeN: settings.breathing.shapeN,
    youngsModulusKPa: compactKPa(settings.material.youngsModulusPa),
    poissonRatio: settings.material.poissonRatio,
  };
}

function compactKPa(pascals: number): number {
  return Number((pascals / PA_PER_KPA).toPrecision(12));
}

/**
 * The settings the form holds, checked by the shared schema (the server's own rule); null while
 * a field is empty or breaks it.
 */
export function rehearsalSettingsOf(form: RehearsalSettingsForm): RehearsalSettings | null {
  const value = form.getRawValue();
  const { amplitudeMm, periodS, shapeN, youngsModulusKPa, poissonRatio } = value;
  if (
    amplitudeMm === null ||
    periodS === null ||
    shapeN === null ||
    youngsModulusKPa === null ||
    poissonRatio === null
  ) {
    return null;
  }
  const parsed = rehearsalSettingsSchema.safeParse({
    resolution: value.resolution,
    breathing: { amplitudeMm, periodS, shapeN },
    material: { youngsModulusPa: toScaled(youngsModulusKPa, PA_PER_KPA), poissonRatio },
  });
  return parsed.success ? parsed.data : null;
}

/** The API's field paths (PATCH /api/cases/:id) against the form's controls. */
const controlOfPath: Record<string, keyof RehearsalSettingsForm['controls']> = {
  'rehearsal.resolution': 'resolution',
  'rehearsal.breathing.amplitudeMm': 'amplitudeMm',
  'rehearsal.breathing.periodS': 'periodS',
  'rehearsal.breathing.shapeN': 'shapeN',
  'rehearsal.material.youngsModulusPa': 'youngsModulusKPa',
  'rehearsal.material.poissonRatio': 'poissonRatio',
};

/**
 * Puts the field errors of a refusal (RFC 9457 `errors[]`) on the controls they concern, marked
 * touched so they show; the values stay as typed. Returns the messages that concern no control.
 */
export function applyRehearsalFieldErrors(form: RehearsalSettingsForm, error: unknown): string[] {
  const unmatched: string[] = [];
  for (const fieldError of problemOf(error)?.errors ?? []) {
    const name = controlOfPath[fieldError.path];
    if (name) {
      const control = form.controls[name];
      control.setErrors({ ...control.errors, server: fieldError.message });
      control.markAsTouched();
    } else {
      unmatched.push(`${fieldError.path}: ${fieldError.message}`);
    }
  }
  return unmatched;
}
