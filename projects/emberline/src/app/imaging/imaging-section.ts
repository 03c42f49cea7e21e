import { DatePipe, DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { seriesLabel, type ImageSeriesView, type SeriesRemovalView } from '@emberline/shared';
import {
  ConfirmDialog,
  type ConfirmDialogData,
  type ConfirmDialogResult,
} from '../core/confirm-dialog';
import { CaseFileState } from '../cases/case-file-state';
import { problemMessage } from '../core/problem';
import { compressionNote } from './compression-note';
import { SeriesApi } from './series-api';
import { SeriesUpload } from './series-upload';
import { StructurePanel } from './structure-panel';

/**
 * Imaging of the case file: its series, their upload, the structures of each series, and the
 * way into each series' viewer. The presenter removes a series, or replaces it: the confirmation
 * lists everything that goes (from GET /api/series/:id/removal) and is disabled, with the
 * reason, while an assessment ran on it. A replacement is an upload then the removal of the
 * old series once the new one is stored (one confirmation; nothing is removed if the upload
 * fails or is cancelled).
 */
@Component({
  selector: 'em-imaging-section',
  imports: [
    DatePipe,
    DecimalPipe,
    MatButton,
    MatIcon,
    MatProgressBar,
    RouterLink,
    SeriesUpload,
    StructurePanel,
  ],
  templateUrl: './imaging-section.html',
  styleUrl: './imaging-section.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ImagingSection {
  private readonly state = inject(CaseFileState);
  private readonly api = inject(SeriesApi);
  private readonly dialog = inject(MatDialog);

  protected readonly detail = this.state.detail;
  protected readonly compressionNote = compressionNote;
  protected readonly canEdit = computed(() => this.detail()?.permissions.canEdit ?? false);
  protected readonly series = this.api.list(this.state.caseId);
  /** The series an upload is to replace, once confirmed; null otherwise. */
  protected readonly replacing = signal<{ id: string; label: string } | null>(null);
  protected readonly busyId = signal<string | null>(null);
  protected readonly removalError = signal('');
  protected readonly seriesLabel = seriesLabel;
  protected readonly seriesList = computed<ImageSeriesView[]>(() =>
    this.series.hasValue() ? this.series.value() : [],
  );
  protected readonly loadError = computed(() => {
    const error = this.series.error();
    return error ? problemMessage(error) : '';
  });

  protected added(created: ImageSeriesView): void {
    this.series.update((list) => [...(list ?? []), created]);
    const replaced = this.replacing();
    if (replaced) {
      this.replacing.set(null);
      this.remove(replaced.id);
    }
  }

  /** Asks before removing (or replacing) the series, listing what goes with it. */
  protected confirm(item: ImageSeriesView, action: 'remove' | 'replace'): void {
    this.busyId.set(item.id);
    this.removalError.set('');
    this.api.removal(item.id).subscribe({
      next: (removal) => {
        this.busyId.set(null);
        const data = removalDialogData(removal, action);
        this.dialog
          .open<ConfirmDialog, ConfirmDialogData, ConfirmDialogResult>(ConfirmDialog, { data })
          .afterClosed()
          .subscribe((result) => {
            if (result !== true) return;
            if (action === 'remove') this.remove(item.id);
            else this.replacing.set({ id: item.id, label: removal.seriesLabel });
          });
      },
      error: (error: unknown) => {
        this.busyId.set(null);
        this.removalError.set(
          ['What goes with the series could not be read.', problemMessage(error)].join(' '),
        );
      },
    });
  }

  private remove(seriesId: string): void {
    this.busyId.set(seriesId);
    this.api.remove(seriesId).subscribe({
      next: () => {
        this.busyId.set(null);
        this.series.update((list) => (list ?? []).filter((item) => item.id !== seriesId));
      },
      error: (error: unknown) => {
        this.busyId.set(null);
        this.removalError.set(['The series was not removed.', problemMessage(error)].join(' '));
      },
    });
  }
}

/** The confirmation of a removal or replacement: everything that goes, or why it cannot. */
export function removalDialogData(
  removal: SeriesRemovalView,
  action: 'remove' | 'replace',
): ConfirmDialogData {
  const items = [
    `The series ${removal.seriesLabel} and its image volume`,
    ...removal.structures.map(
      (structure) =>
        `Structure ${structure.name}` +
        (structure.lesionLabel
          ? ` (${structure.isLesionConfirmed ? 'confirmed' : 'suggested'} link to the lesion in ${structure.lesionLabel})`
          : ''),
    ),
    ...(removal.hasLabelMap ? ['Its label map'] : []),
    ...removal.plans.map((plan) => `Plan ${plan.name}, drafted on it`),
    ...(removal.annotationCount
      ? [`${removal.annotationCount} annotation${removal.annotationCount === 1 ? '' : 's'}`]
      : []),
    ...(removal.keyImageCount
      ? [`${removal.keyImageCount} key image${removal.keyImageCount === 1 ? '' : 's'}`]
      : []),
  ];
  const blockedReason = removal.blockedBy.length
    ? 'It cannot be removed: assessments ran on it (' +
      removal.blockedBy
        .map(
          (entry) =>
            `plan ${entry.planName}: ${entry.assessmentCount} assessment${entry.assessmentCount === 1 ? '' : 's'}`,
        )
        .join('; ') +
      '). Their results rest on this series.'
    : undefined;
  return action === 'remove'
    ? {
        title: `Remove the series ${removal.seriesLabel}?`,
        message: 'These go with it and cannot be restored:',
        items,
        confirmLabel: 'Remove series',
        blockedReason,
      }
    : {
        title: `Replace the series ${removal.seriesLabel}?`,
        message:
          'Upload the new series next. Once it is stored, these go and cannot be restored; ' +
          'nothing goes if the upload fails or you cancel it:',
        items,
        confirmLabel: 'Choose the new series',
        blockedReason,
      };
}
