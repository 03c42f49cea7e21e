import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogTitle,
} from '@angular/material/dialog';
import { RouterLink } from '@angular/router';
import { keyImagePaneLabels, type KeyImageView } from '@emberline/shared';

export interface KeyImageDialogData {
  image: KeyImageView;
  seriesLabel: string;
}

/** A key image at full size with its caption and byline, and a way to the series it shows. */
@Component({
  selector: 'em-key-image-dialog',
  imports: [
    DatePipe,
    RouterLink,
    MatDialogTitle,
    MatDialogContent,
    MatDialogActions,
    MatDialogClose,
    MatButton,
  ],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <h2 mat-dialog-title>{{ data.image.caption ?? 'Key image' }}</h2>
    <mat-dialog-content>
      <img
        class="picture"
        data-key-image-large
        [src]="data.image.imageUrl"
        [attr.width]="data.image.widthPx"
        [attr.height]="data.image.heightPx"
        [alt]="altText"
      />
      <p class="em-muted">
        {{ paneLabels[data.image.pane] }} view · {{ data.seriesLabel }} · kept by
        {{ data.image.author.displayName }},
        <time [attr.datetime]="data.image.createdAt">{{
          data.image.createdAt | date: 'd MMM y, HH:mm'
        }}</time>
      </p>
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <a
        mat-button
        [routerLink]="['/cases', data.image.caseId, 'imaging', data.image.seriesId, 'viewer']"
        [mat-dialog-close]="null"
        >Open the series in the viewer</a
      >
      <button mat-flat-button type="button" [mat-dialog-close]="null">Close</button>
    </mat-dialog-actions>
  `,
  styles: `
    .picture {
      display: block;
      max-width: 100%;
      max-height: 70vh;
      width: auto;
      height: auto;
      margin: 0 auto 8px;
      background: #0d1217;
    }
  `,
})
export class KeyImageDialog {
  protected readonly data = inject<KeyImageDialogData>(MAT_DIALOG_DATA);
  protected readonly paneLabels = keyImagePaneLabels;
  protected readonly altText = `${keyImagePaneLabels[this.data.image.pane]} view kept by ${this.data.image.author.displayName}${this.data.image.caption ? `: ${this.data.image.caption}` : ''}`;
}
