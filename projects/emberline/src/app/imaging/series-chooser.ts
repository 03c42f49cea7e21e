import { HttpErrorResponse } from '@angular/common/http';
import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  computed,
  inject,
  input,
  linkedSignal,
  output,
  signal,
} from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { DatePipe, DecimalPipe } from '@angular/common';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import { MatChip } from '@angular/material/chips';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import {
  lossyCompressionNote,
  type ImageSeriesView,
  type UploadListing,
  type UploadProgress,
  type UploadSeriesCandidate,
} from '@emberline/shared';
import { ConfirmDialog, type ConfirmDialogData } from '../core/confirm-dialog';
import { problemMessage } from '../core/problem';
import { pollDuring } from './progress-polling';
import { newProgressToken } from './progress-token';
import { SeriesApi } from './series-api';
import { UploadProgressPanel } from './upload-progress-panel';

/** The phase hint of the series a liver board usually reads first (common practice). */
const preferredPhase = 'portal venous';

/** The series chosen at first: the one portal venous series when there is exactly one. */
export function preselectedKeys(candidates: readonly UploadSeriesCandidate[]): ReadonlySet<string> {
  const portalVenous = candidates.filter(
    (candidate) => candidate.phaseHint?.trim().toLowerCase() === preferredPhase,
  );
  return new Set(portalVenous.length === 1 ? [portalVenous[0].key] : []);
}

type ChooserPhase = 'choosing' | 'keeping' | 'discarding';

/**
 * The choice among the series of an upload that holds several (the server answered 202): what
 * each series is, which to keep, and what was not offered and why. Keeping stores the chosen
 * series (with the server's progress shown); discarding forgets the upload. Nothing is stored
 * before Keep.
 */
@Component({
  selector: 'em-series-chooser',
  imports: [DatePipe, DecimalPipe, MatButton, MatCheckbox, MatChip, MatIcon, UploadProgressPanel],
  templateUrl: './series-chooser.html',
  styleUrl: './series-chooser.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SeriesChooser {
  private readonly api = inject(SeriesApi);
  private readonly dialog = inject(MatDialog);
  private readonly destroyRef = inject(DestroyRef);

  readonly listing = input.required<UploadListing>();
  /** The series stored by Keep, in the server's order. */
  readonly kept = output<ImageSeriesView[]>();
  /** The upload was discarded: nothing is stored. */
  readonly discarded = output();
  /** The server no longer holds the upload (it forgets one when its expiry passes). */
  readonly forgotten = output();

  protected readonly lossyNote = lossyCompressionNote;
  protected readonly chosenKeys = linkedSignal(() => preselectedKeys(this.listing().series));
  protected readonly phase = signal<ChooserPhase>('choosing');
  protected readonly progress = signal<UploadProgress | null>(null);
  protected readonly errorText = signal('');

  protected readonly isBusy = computed(() => this.phase() !== 'choosing');
  protected readonly chosenCount = computed(() => this.chosenKeys().size);
  protected readonly keepLabel = computed(() =>
    this.chosenCount() ? `Keep ${this.chosenCount()} series` : 'Keep series',
  );

  protected toggle(key: string, isChosen: boolean): void {
    this.chosenKeys.update((keys) => {
      const next = new Set(keys);
      if (isChosen) next.add(key);
      else next.delete(key);
      return next;
    });
  }

  protected keep(): void {
    // In the listing's order, whatever order the boxes were ticked in.
    const keys = this.listing()
      .series.map((candidate) => candidate.key)
      .filter((key) => this.chosenKeys().has(key));
    if (!keys.length) return;
    const token = newProgressToken();
    this.errorText.set('');
    this.progress.set(null);
    this.phase.set('keeping');
    pollDuring(this.api.keep(this.listing().uploadId, keys, token), null, () =>
      this.api.progress(token),
    )
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (polled) => {
          if (polled.kind === 'progress') this.progress.set(polled.progress);
          else this.kept.emit(polled.event);
        },
        error: (error: unknown) => {
          this.phase.set('choosing');
          if (isNotFound(error)) this.forgotten.emit();
          else this.errorText.set(`Nothing was stored. ${problemMessage(error)}`);
        },
      });
  }

  protected confirmDiscard(): void {
    const count = this.listing().series.length;
    const data: ConfirmDialogData = {
      title: 'Discard the upload?',
      message:
        `Nothing of this upload will be stored: none of its ${count} series is kept, ` +
        'and the server forgets the files.',
      confirmLabel: 'Discard the upload',
    };
    this.dialog
      .open<ConfirmDialog, ConfirmDialogData, boolean>(ConfirmDialog, { data })
      .afterClosed()
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe((isConfirmed) => {
        if (isConfirmed) this.discard();
      });
  }

  private discard(): void {
    this.errorText.set('');
    this.phase.set('discarding');
    this.api
      .discard(this.listing().uploadId)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: () => this.discarded.emit(),
        error: (error: unknown) => {
          // An upload the server has already forgotten holds nothing to discard.
          if (isNotFound(error)) {
            this.discarded.emit();
            return;
          }
          this.phase.set('choosing');
          this.errorText.set(`The upload was not discarded. ${problemMessage(error)}`);
        },
      });
  }
}

function isNotFound(error: unknown): boolean {
  return error instanceof HttpErrorResponse && error.status === 404;
}
