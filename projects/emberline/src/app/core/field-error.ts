import { Pipe, type PipeTransform } from '@angular/core';
import type { ValidationErrors } from '@angular/forms';

/**
 * The sentence for a control's errors: `{{ form.controls.inr.errors | fieldError }}`.
 * Pure on the errors object, which Angular replaces whenever validation runs.
 */
@Pipe({ name: 'fieldError' })
export class FieldError implements PipeTransform {
  transform(errors: ValidationErrors | null | undefined): string {
    return fieldErrorText(errors);
  }
}

/** A server error wins (it is what the server refused); then required, then the rules. */
export function fieldErrorText(errors: ValidationErrors | null | undefined): string {
  if (!errors) return '';
  if (typeof errors['server'] === 'string') return sentenceCase(errors['server']);
  if (errors['required']) return 'Required';
  if (typeof errors['rule'] === 'string') return errors['rule'];
  if (errors['email']) return 'Not a valid e-mail address';
  if (errors['min']) return `At least ${String((errors['min'] as { min: number }).min)}`;
  if (errors['max']) return `At most ${String((errors['max'] as { max: number }).max)}`;
  if (errors['minlength']) {
    return `At least ${String((errors['minlength'] as { requiredLength: number }).requiredLength)} characters`;
  }
  if (errors['maxlength']) {
    return `At most ${String((errors['maxlength'] as { requiredLength: number }).requiredLength)} characters`;
  }
  if (errors['pattern']) return 'Not in the expected format';
  return 'Not valid';
}

/** The text with its first letter in capitals ("does not match" → "Does not match"). */
export function sentenceCase(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}
