import type { FormGroup } from '@angular/forms';
import { problemMessage } from '../core/problem';
import { applyFieldErrors } from '../core/server-field-errors';

/**
 * What a profile dialog says when the server refuses a save: the field errors go onto their
 * controls, the rest (and the problem's detail) into one line.
 */
export function profileSaveRefusal(form: FormGroup, error: unknown, isEditing: boolean): string {
  const unmatched = applyFieldErrors(form, error);
  return [
    isEditing ? 'The profile was not saved.' : 'The profile was not created.',
    problemMessage(error),
    ...unmatched,
  ].join(' ');
}
