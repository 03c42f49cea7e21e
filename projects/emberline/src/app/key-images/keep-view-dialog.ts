import { ChangeDetectionStrategy, Component, DestroyRef, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogRef,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatProgressBar } from '@angular/material/progress-bar';
import {
  keyImageLimits,
  keyImagePaneLabels,
  type KeyImagePane,
  type KeyImageView,
  type KeyImageViewState,
} from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { KeyImageApi } from './key-image-api';

export interface KeepViewDialogData {
  caseId: string;
  seriesId: string;
  pane: KeyImagePane;
  png: Blob;
  widthPx: number;
  heightPx: number;
  viewState: KeyImageViewState;
}

/**
 * "Keep this view": the picture just taken of a pane, an optional caption, and Keep. Closes
 * with the kept key image; a refusal stays in the dialog in the server's words.
 */
@Component({
  selector: 'em-keep-view-dialog',
  imports: [
    MatDialogTitle,
    MatDialogContent,
    MatDialogActions,
    MatDialogClose,
    MatButton,
    MatFormField,
    MatLabel,
    MatHint,
    MatInput,
    MatProgressBar,
  ],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h2 mat-dialog-title>Keep this view</h2>
    <mat-dialog-content>
      <img
        class="preview"
        data-keep-preview
        [src]="previewUrl"
        [alt]="'The ' + paneLabel + ' view as it will be kept'"
      />
      <p class="em-muted">
        {{ paneLabel }} view · {{ data.widthPx }} × {{ data.heightPx }} px. It is listed in the
        case's Discussion section and printed in the board summary.
      </p>
      <mat-form-field appearance="outline" class="caption">
        <mat-label>Caption (optional)</mat-label>
        <input
          matInput
          data-keep-caption
          [maxLength]="maxCaption"
          [value]="caption()"
          (input)="caption.set($any($event.target).value)"
          (keydown.enter)="keep()"
        />
        <mat-hint align="end">{{ caption().length }} / {{ maxCaption }}</mat-hint>
      </mat-form-field>
      @if (isSaving()) {
        <mat-progress-bar mode="indeterminate" aria-label="Keeping the view" />
      }
      @if (problem()) {
        <p class="em-error-text" role="alert">The view was not kept. {{ problem() }}</p>
      }
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button mat-button type="button" [mat-dialog-close]="null">Cancel</button>
      <button mat-flat-button type="button" [disabled]="isSaving()" (click)="keep()">Keep</button>
    </mat-dialog-actions>
  `,
  styles: `
    .preview {
      display: block;
      max-width: 100%;
      max-height: 50vh;
      margin: 0 auto 8px;
      background: #0d1217;
    }
    .caption {
      width: 100%;
    }
  `,
})
export class KeepViewDialog {
  protected readonly data = inject<KeepViewDialogData>(MAT_DIALOG_DATA);
  private readonly dialogRef =
    inject<MatDialogRef<KeepViewDialog, KeyImageView | null>>(MatDialogRef);
  private readonly api = inject(KeyImageApi);

  protected readonly previewUrl = URL.createObjectURL(this.data.png);
  protected readonly paneLabel = keyImagePaneLabels[this.data.pane];
  protected readonly maxCaption = keyImageLimits.maxCaptionLength;
  protected readonly caption = signal('');
  protected readonly isSaving = signal(false);
  protected readonly problem = signal('');

  constructor() {
    inject(DestroyRef).onDestroy(() => URL.revokeObjectURL(this.previewUrl));
  }

  protected keep(): void {
    if (this.isSaving()) return;
    this.isSaving.set(true);
    this.problem.set('');
    const caption = this.caption().trim();
    this.api
      .keep(this.data.caseId, this.data.png, {
        seriesId: this.data.seriesId,
        pane: this.data.pane,
        ...(caption ? { caption } : {}),
        viewState: this.data.viewState,
      })
      .subscribe({
        next: (kept) => this.dialogRef.close(kept),
        error: (error: unknown) => {
          this.isSaving.set(false);
          this.problem.set(problemMessage(error));
        },
      });
  }
}
