import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatProgressBar } from '@angular/material/progress-bar';
import { keyImagePaneLabels, type KeyImageView } from '@emberline/shared';
import { ConfirmDialog, type ConfirmDialogData } from '../core/confirm-dialog';
import { problemMessage } from '../core/problem';
import { KeyImageApi } from './key-image-api';
import { KeyImageDialog, type KeyImageDialogData } from './key-image-dialog';

/**
 * The key images of a case, oldest first: a thumbnail (the stored PNG), caption, pane, series,
 * author and time. A thumbnail opens the picture at full size; "Remove" shows only where the
 * server says the reader may (`canDelete`: the author, until the decision), and asks first.
 */
@Component({
  selector: 'em-key-image-list',
  imports: [DatePipe, MatButton, MatProgressBar],
  templateUrl: './key-image-list.html',
  styleUrl: './key-image-list.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class KeyImageList {
  private readonly api = inject(KeyImageApi);
  private readonly dialog = inject(MatDialog);

  readonly caseId = input<string | undefined>();
  /** "Series 3 · CT" for a series id: the section's own wording. */
  readonly seriesLabel = input<(seriesId: string) => string>(() => 'A series of the case');

  protected readonly paneLabels = keyImagePaneLabels;
  protected readonly resource = this.api.list(this.caseId);
  protected readonly images = computed<KeyImageView[]>(() =>
    this.resource.hasValue()
      ? [...this.resource.value()].sort((a, b) => a.createdAt.localeCompare(b.createdAt))
      : [],
  );
  protected readonly loadError = computed(() => {
    const error = this.resource.error();
    return error ? problemMessage(error) : '';
  });
  protected readonly removeError = signal('');
  protected readonly removingIds = signal<ReadonlySet<string>>(new Set());

  protected open(image: KeyImageView): void {
    const data: KeyImageDialogData = { image, seriesLabel: this.seriesLabel()(image.seriesId) };
    this.dialog.open<KeyImageDialog, KeyImageDialogData>(KeyImageDialog, {
      data,
      maxWidth: '96vw',
    });
  }

  protected askRemove(image: KeyImageView): void {
    const data: ConfirmDialogData = {
      title: 'Remove this key image?',
      message: `${image.caption ? `“${image.caption}”: ` : ''}the picture and its view are removed from the case and from the board summary. This cannot be undone.`,
      confirmLabel: 'Remove',
    };
    this.dialog
      .open<ConfirmDialog, ConfirmDialogData, boolean>(ConfirmDialog, { data })
      .afterClosed()
      .subscribe((isConfirmed) => {
        if (isConfirmed) this.remove(image);
      });
  }

  private remove(image: KeyImageView): void {
    this.removeError.set('');
    this.removingIds.update((ids) => new Set(ids).add(image.id));
    const done = () =>
      this.removingIds.update((ids) => {
        const next = new Set(ids);
        next.delete(image.id);
        return next;
      });
    this.api.remove(image.id).subscribe({
      next: () => {
        done();
        this.resource.reload();
      },
      error: (error: unknown) => {
        done();
        this.removeError.set(`The key image was not removed. ${problemMessage(error)}`);
      },
    });
  }
}
