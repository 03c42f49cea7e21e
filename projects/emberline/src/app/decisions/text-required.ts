import type { AbstractControl, ValidationErrors } from '@angular/forms';

/**
 * `required` for a text the server trims: only spaces count as empty, so the field says
 * "Required" rather than failing the shared schema's minimum after the trim.
 */
export function textRequired(control: AbstractControl): ValidationErrors | null {
  const value: unknown = control.value;
  return typeof value === 'string' && value.trim() !== '' ? null : { required: true };
}
