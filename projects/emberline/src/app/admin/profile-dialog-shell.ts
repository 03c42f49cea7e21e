import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatButton } from '@angular/material/button';
import {
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogTitle,
} from '@angular/material/dialog';

/**
 * The frame of the dialog that creates or edits a profile (applicator or safety): the title,
 * the profile's version and what saving does to it, the fields the dialog projects, its error
 * message, and Cancel beside Save (or Create).
 *
 * The dialog puts its form on this element, `<em-profile-dialog-shell [formGroup]="form"
 * (ngSubmit)="save()">`: the projected fields find their `formControlName` parent there, and
 * the `submit` of the inner `<form>` (Enter in a field, the submit button) bubbles up to it.
 */
@Component({
  selector: 'em-profile-dialog-shell',
  imports: [MatDialogTitle, MatDialogContent, MatDialogActions, MatDialogClose, MatButton],
  templateUrl: './profile-dialog-shell.html',
  styleUrl: './profile-dialog-shell.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ProfileDialogShell {
  readonly heading = input.required<string>();
  /** The version being edited, or null for a profile not created yet. */
  readonly version = input.required<number | null>();
  readonly isSaving = input(false);
  /** Why the last save failed; shown under the fields. */
  readonly errorText = input('');

  protected readonly nextVersion = computed(() => (this.version() ?? 0) + 1);
}
