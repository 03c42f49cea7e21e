import type { AbstractControl } from '@angular/forms';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage, problemOf } from '../core/problem';

/**
 * What a dialog shows of a refused request: field errors go on their fields (the values stay as
 * typed); the sentence returned is whatever matched no field, or the problem's own words (a 409
 * clash, a 403). Empty when every message found its field.
 */
export function refusalText(form: AbstractControl, error: unknown): string {
  const problem = problemOf(error);
  if (problem?.errors?.length) {
    const unmatched = applyFieldErrors(form, error);
    return unmatched.length ? unmatched.join(' ') : '';
  }
  return problemMessage(error);
}
