import { ChangeDetectionStrategy, Component, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogTitle,
  type MatDialog,
  type MatDialogRef,
} from '@angular/material/dialog';
import type { ReplayMode } from './rehearsal-frames';
import { RehearsalReplay } from './rehearsal-replay';

export interface RehearsalReplayDialogData {
  assessmentId: string;
  applicatorIndex: number;
  /** Whose rehearsal it is, for the title: the plan's name. */
  planName?: string;
  initialMode?: ReplayMode;
}

/** The rehearsal replay in a dialog, opened from the plan comparison and the viewer. */
@Component({
  selector: 'em-rehearsal-replay-dialog',
  imports: [
    MatButton,
    MatDialogActions,
    MatDialogClose,
    MatDialogContent,
    MatDialogTitle,
    RehearsalReplay,
  ],
  host: { 'data-testid': 'rehearsal-replay-dialog' },
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h2 mat-dialog-title>
      Insertion rehearsal in 3D · applicator {{ data.applicatorIndex + 1 }}
      @if (data.planName) {
        · {{ data.planName }}
      }
    </h2>
    <mat-dialog-content>
      <em-rehearsal-replay
        [assessmentId]="data.assessmentId"
        [applicatorIndex]="data.applicatorIndex"
        [initialMode]="data.initialMode ?? 'freehand'"
      />
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button mat-button type="button" mat-dialog-close>Close</button>
    </mat-dialog-actions>
  `,
})
export class RehearsalReplayDialog {
  protected readonly data = inject<RehearsalReplayDialogData>(MAT_DIALOG_DATA);
}

/** Opens the replay of one applicator's rehearsal, wide enough for the 3D view. */
export function openRehearsalReplay(
  dialog: MatDialog,
  data: RehearsalReplayDialogData,
): MatDialogRef<RehearsalReplayDialog> {
  return dialog.open(RehearsalReplayDialog, {
    data,
    width: '960px',
    maxWidth: '95vw',
    autoFocus: 'dialog',
  });
}
