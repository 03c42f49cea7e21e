import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatSnackBar } from '@angular/material/snack-bar';
import {
  keyImageLimits,
  keyImagePaneLabels,
  type KeyImagePane,
  type KeyImageView,
  type KeyImageViewState,
} from '@emberline/shared';
import { KeepViewDialog, type KeepViewDialogData } from '../../key-images/keep-view-dialog';
import { ZoneOverlay } from './assessment/zone-overlay';
import { sliceIndexAt } from './slice-viewport';
import { ViewerSession } from './viewer-session';

/**
 * "Keep this view": takes a picture of the pane in use (the last one pressed or focused) with
 * what is drawn over it, and the view state that made it, and opens the dialog that keeps it on
 * the case as a key image (`server/src/modules/key-images/README.md`). A snack bar confirms.
 */
@Component({
  selector: 'em-keep-view-button',
  imports: [MatButton, MatIcon],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <button
      mat-stroked-button
      type="button"
      data-keep-view
      [disabled]="isTaking()"
      title="Keeps a picture of this pane and its view state as a key image of the case"
      (click)="keep()"
    >
      <mat-icon aria-hidden="true">photo_camera</mat-icon>
      Keep this view · {{ paneLabel() }}
    </button>
  `,
})
export class KeepViewButton {
  private readonly session = inject(ViewerSession);
  private readonly zones = inject(ZoneOverlay);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);

  readonly caseId = input.required<string>();
  readonly seriesId = input.required<string>();
  /** The saved plan on screen, if any. */
  readonly planId = input<string | null>(null);

  protected readonly paneLabel = computed(() => keyImagePaneLabels[this.session.activePane()]);
  protected readonly isTaking = signal(false);

  protected async keep(): Promise<void> {
    const pane = this.session.activePane();
    const viewState = this.viewState(pane);
    if (!viewState) return;
    this.isTaking.set(true);
    let data: KeepViewDialogData;
    try {
      const picture = await this.session.capture(pane);
      data = {
        caseId: this.caseId(),
        seriesId: this.seriesId(),
        pane,
        png: picture.png,
        widthPx: picture.widthPx,
        heightPx: picture.heightPx,
        viewState,
      };
    } catch (error) {
      this.snackBar.open(
        `The view could not be taken. ${error instanceof Error ? error.message : ''}`,
        'Dismiss',
        { duration: 10_000, politeness: 'assertive' },
      );
      return;
    } finally {
      this.isTaking.set(false);
    }
    this.dialog
      .open<KeepViewDialog, KeepViewDialogData, KeyImageView | null>(KeepViewDialog, {
        data,
        width: '560px',
        maxWidth: '96vw',
      })
      .afterClosed()
      .subscribe((kept) => {
        if (!kept) return;
        this.snackBar.open(
          'Key image kept. It is listed in the Discussion section of the case.',
          'OK',
          { duration: 6_000 },
        );
      });
  }

  /** What the viewer shows now, enough to put the view back (the shared schema's bounds). */
  private viewState(pane: KeyImagePane): KeyImageViewState | null {
    const cursor = this.session.cursorLps();
    const volume = this.session.volume();
    const axes = this.session.axes();
    if (!cursor || !volume || !axes) return null;
    const window = this.session.window();
    const sliceIndex =
      pane === '3d' ? null : sliceIndexAt(volume.geometry, axes[pane].voxelAxis, cursor);
    return {
      cursorLps: [cursor[0], cursor[1], cursor[2]],
      sliceIndex,
      window: { width: window.width, level: window.centre },
      camera: this.session.camera()?.pose ?? null,
      hiddenLabels: [...this.session.hiddenLabels()].slice(0, keyImageLimits.maxHiddenLabels),
      labelOpacity: this.session.opacity(),
      planId: this.planId(),
      zones: [...this.zones.shownZones()],
    };
  }
}
