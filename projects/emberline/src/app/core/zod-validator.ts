import type { AbstractControl, ValidationErrors, ValidatorFn } from '@angular/forms';
import type { z } from 'zod';
import { sentenceCase } from './field-error';

/**
 * A form validator from a shared zod schema, so the browser checks a field by the same rule
 * as the server. The error is `{ rule: '<sentence>' }`.
 */
export function zodValidator(schema: z.ZodType): ValidatorFn {
  return (control: AbstractControl): ValidationErrors | null => {
    if (control.value === null || control.value === '' || control.value === undefined) {
      // Emptiness is the `required` validator's business, so optional fields stay optional.
      return null;
    }
    const result = schema.safeParse(control.value);
    return result.success ? null : { rule: zodIssueText(result.error.issues[0]) };
  };
}

/**
 * A validator for the value of a measured quantity `{ value, unit }`: the schema's range depends
 * on the unit chosen beside it (the sibling control `unit`).
 */
export function measuredValueValidator(schema: z.ZodType): ValidatorFn {
  return (control: AbstractControl): ValidationErrors | null => {
    if (control.value === null || control.value === '' || control.value === undefined) return null;
    const unit: unknown = control.parent?.get('unit')?.value;
    const result = schema.safeParse({ value: control.value, unit });
    return result.success ? null : { rule: zodIssueText(result.error.issues[0]) };
  };
}

/** A short sentence for a zod issue, in the words the form shows. */
export function zodIssueText(issue: z.core.$ZodIssue | undefined): string {
  if (!issue) return 'Not valid';
  switch (issue.code) {
    case 'too_small':
      if (issue.origin === 'string') return `At least ${String(issue.minimum)} characters`;
      return issue.inclusive === false
        ? `Must be above ${String(issue.minimum)}`
        : `At least ${String(issue.minimum)}`;
    case 'too_big':
      if (issue.origin === 'string') return `At most ${String(issue.maximum)} characters`;
      return issue.inclusive === false
        ? `Must be below ${String(issue.maximum)}`
        : `At most ${String(issue.maximum)}`;
    case 'invalid_type':
      if (issue.expected === 'int') return 'A whole number';
      if (issue.expected === 'number') return 'A number';
      return 'Not valid';
    case 'invalid_format':
      if (issue.format === 'email') return 'Not a valid e-mail address';
      if (issue.format === 'uuid') return 'Choose one of the options';
      return sentenceCase(issue.message);
    case 'invalid_value':
      return 'Choose one of the options';
    default:
      return sentenceCase(issue.message);
  }
}
