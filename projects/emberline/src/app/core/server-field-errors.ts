import type { AbstractControl } from '@angular/forms';
import { problemOf } from './problem';

/**
 * Puts the field errors of a problem (`errors[].path`, "bilirubin.value") onto the matching
 * controls of a form as a `server` error, and marks them touched so the message shows. The
 * values stay as typed; the error goes away as soon as the user edits the field.
 * Returns the messages that matched no control, for the caller to show elsewhere.
 */
export function applyFieldErrors(form: AbstractControl, error: unknown): string[] {
  const fieldErrors = problemOf(error)?.errors ?? [];
  const unmatched: string[] = [];
  for (const fieldError of fieldErrors) {
    const control = form.get(fieldError.path);
    if (control && control !== form) {
      control.setErrors({ ...control.errors, server: fieldError.message });
      control.markAsTouched();
    } else {
      unmatched.push(`${fieldError.path}: ${fieldError.message}`);
    }
  }
  return unmatched;
}
