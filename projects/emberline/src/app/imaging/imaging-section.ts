import { DatePipe, DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import type { ImageSeriesView } from '@emberline/shared';
import { CaseFileState } from '../cases/case-file-state';
import { problemMessage } from '../core/problem';
import { compressionNote } from './compression-note';
import { SeriesApi } from './series-api';
import { SeriesUpload } from './series-upload';
import { StructurePanel } from './structure-panel';

/**
 * Imaging of the case file: its series, their upload, the structures of each series, and the
 * way into each series' viewer.
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

  protected readonly detail = this.state.detail;
  protected readonly compressionNote = compressionNote;
  protected readonly canEdit = computed(() => this.detail()?.permissions.canEdit ?? false);
  protected readonly series = inject(SeriesApi).list(this.state.caseId);
  protected readonly seriesList = computed<ImageSeriesView[]>(() =>
    this.series.hasValue() ? this.series.value() : [],
  );
  protected readonly loadError = computed(() => {
    const error = this.series.error();
    return error ? problemMessage(error) : '';
  });

  protected added(created: ImageSeriesView): void {
    this.series.update((list) => [...(list ?? []), created]);
  }
}
