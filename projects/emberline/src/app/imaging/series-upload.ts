import { HttpEventType, type HttpEvent } from '@angular/common/http';
import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  ElementRef,
  computed,
  inject,
  input,
  output,
  signal,
  viewChild,
} from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import type { ImageSeriesView, UploadListing, UploadProgress } from '@emberline/shared';
import { from, type Subscription } from 'rxjs';
import { problemMessage } from '../core/problem';
import { byteSize } from './byte-size';
import { compressionNote } from './compression-note';
import { entriesOfDrop, filesOfEntries, filesOfFolderPicker, folderCount } from './folder-files';
import { pollDuring } from './progress-polling';
import { newProgressToken } from './progress-token';
import { SeriesApi, uploadAnswer, type UploadFile } from './series-api';
import { SeriesChooser } from './series-chooser';
import { UploadProgressPanel } from './upload-progress-panel';

type UploadPhase = 'idle' | 'reading-folder' | 'sending' | 'reading' | 'choosing';

/** What the server has made of the upload: sent bytes are one thing, stored series another. */
type PolledUpload = HttpEvent<ImageSeriesView | UploadListing>;

/**
 * Upload of imaging: the DICOM files of one series, one zip, or a whole study as a folder (CD
 * export, DICOMDIR and all). The transfer shows a determinate bar; once every byte is sent, the
 * server's progress (files read, slices decoded per series). One series is stored at once; a
 * study with several is shown for the presenter to choose from (`SeriesChooser`). A refusal
 * keeps the chosen files, so that the presenter can fix the choice or try again.
 */
@Component({
  selector: 'em-series-upload',
  imports: [MatButton, MatIcon, MatProgressBar, SeriesChooser, UploadProgressPanel],
  templateUrl: './series-upload.html',
  styleUrl: './series-upload.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SeriesUpload {
  private readonly api = inject(SeriesApi);
  private readonly destroyRef = inject(DestroyRef);
  private readonly picker = viewChild.required<ElementRef<HTMLInputElement>>('picker');
  private readonly folderPicker = viewChild.required<ElementRef<HTMLInputElement>>('folderPicker');
  private transfer: Subscription | null = null;

  readonly caseId = input.required<string>();
  readonly uploaded = output<ImageSeriesView>();

  protected readonly files = signal<readonly UploadFile[]>([]);
  protected readonly phase = signal<UploadPhase>('idle');
  protected readonly sentPercent = signal(0);
  protected readonly serverProgress = signal<UploadProgress | null>(null);
  protected readonly listing = signal<UploadListing | null>(null);
  protected readonly errorText = signal('');
  protected readonly doneText = signal('');
  /** One line per series stored by the last keep. */
  protected readonly storedLines = signal<readonly string[]>([]);
  protected readonly isDragOver = signal(false);

  protected readonly isBusy = computed(() => this.phase() !== 'idle');
  protected readonly choiceSummary = computed(() => {
    const files = this.files();
    if (!files.length) return 'No file chosen.';
    const total = files.reduce((sum, { file }) => sum + file.size, 0);
    const count = files.length === 1 ? '1 file' : `${files.length} files`;
    const folders = folderCount(files);
    const within = !folders ? '' : folders === 1 ? ' in 1 folder' : ` in ${folders} folders`;
    return `${count}${within} chosen, ${byteSize(total)} in all.`;
  });
  /** Why the choice cannot be sent as it is, or '' when it can. */
  private readonly choiceProblem = computed(() => {
    const files = this.files();
    if (!files.length) {
      return 'Choose the DICOM files of one series, one zip of them, or the folder of a study.';
    }
    const zips = files.filter(({ path }) => /\.zip$/i.test(path));
    if (zips.length && files.length > 1) {
      return 'A zip is sent on its own: choose either one zip or the DICOM files themselves.';
    }
    return '';
  });

  protected choose(event: Event): void {
    const picker = event.target as HTMLInputElement;
    this.take(Array.from(picker.files ?? [], (file) => ({ file, path: file.name })));
  }

  protected chooseFolder(event: Event): void {
    const picker = event.target as HTMLInputElement;
    const files = filesOfFolderPicker(Array.from(picker.files ?? []));
    if (!files.length && picker.files?.length) {
      this.errorText.set('The folder holds no files other than hidden ones.');
      return;
    }
    this.take(files);
  }

  protected dragOver(event: DragEvent): void {
    event.preventDefault();
    this.isDragOver.set(!this.isBusy());
  }

  protected drop(event: DragEvent): void {
    event.preventDefault();
    this.isDragOver.set(false);
    const transfer = event.dataTransfer;
    if (this.isBusy() || !transfer) return;
    // The entries must be taken now: the browser empties the drop's items after this handler.
    const entries = entriesOfDrop(transfer);
    if (!entries?.some((entry) => entry.isDirectory)) {
      this.take(Array.from(transfer.files, (file) => ({ file, path: file.name })));
      return;
    }
    this.phase.set('reading-folder');
    from(filesOfEntries(entries))
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (files) => {
          this.phase.set('idle');
          if (files.length) this.take(files);
          else this.errorText.set('The dropped folder holds no files other than hidden ones.');
        },
        error: () => {
          this.phase.set('idle');
          this.errorText.set(
            'The dropped folder could not be read. Choose it with “Choose a folder” instead.',
          );
        },
      });
  }

  protected clear(): void {
    this.resetPickers();
    this.files.set([]);
    this.errorText.set('');
  }

  protected send(): void {
    const problem = this.choiceProblem();
    if (problem) {
      this.errorText.set(problem);
      return;
    }
    const token = newProgressToken();
    this.errorText.set('');
    this.doneText.set('');
    this.storedLines.set([]);
    this.sentPercent.set(0);
    this.serverProgress.set(null);
    this.phase.set('sending');
    this.transfer = pollDuring(
      this.api.upload(this.caseId(), this.files(), token),
      isTransferComplete,
      () => this.api.progress(token),
    )
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (polled) => {
          if (polled.kind === 'progress') this.serverProgress.set(polled.progress);
          else this.follow(polled.event);
        },
        error: (error: unknown) => {
          this.phase.set('idle');
          this.transfer = null;
          this.errorText.set(`Nothing was stored. ${problemMessage(error)}`);
        },
      });
  }

  protected cancel(): void {
    this.transfer?.unsubscribe();
    this.transfer = null;
    this.phase.set('idle');
    this.errorText.set('The upload was cancelled; the files are still chosen.');
  }

  protected kept(series: ImageSeriesView[]): void {
    this.listing.set(null);
    this.phase.set('idle');
    this.resetPickers();
    this.files.set([]);
    this.storedLines.set(series.map((item) => `Stored: ${seriesSummary(item)}`));
    for (const item of series) this.uploaded.emit(item);
  }

  protected discarded(): void {
    this.listing.set(null);
    this.phase.set('idle');
    this.doneText.set('The upload was discarded; nothing was stored. The files are still chosen.');
  }

  protected forgotten(): void {
    this.listing.set(null);
    this.phase.set('idle');
    this.errorText.set(
      'The server no longer holds the upload (it waited too long for a choice); send it again.',
    );
  }

  private take(files: UploadFile[]): void {
    if (!files.length) return;
    this.files.set(files);
    this.errorText.set('');
    this.doneText.set('');
    this.storedLines.set([]);
  }

  private follow(event: PolledUpload): void {
    if (event.type === HttpEventType.UploadProgress) {
      const total = event.total ?? 0;
      if (total > 0) this.sentPercent.set(Math.min(100, Math.round((100 * event.loaded) / total)));
      if (isTransferComplete(event)) this.phase.set('reading');
    } else if (event.type === HttpEventType.Response) {
      this.transfer = null;
      const answer = uploadAnswer(event);
      if (answer.kind === 'listing') {
        this.listing.set(answer.listing);
        this.phase.set('choosing');
        return;
      }
      this.phase.set('idle');
      this.resetPickers();
      this.files.set([]);
      const note = compressionNote(answer.series.compression);
      this.doneText.set(
        `Series stored: ${answer.series.modality}, ${answer.series.sliceCount} slices.` +
          (note ? ` ${note}` : ''),
      );
      this.uploaded.emit(answer.series);
    }
  }

  private resetPickers(): void {
    this.picker().nativeElement.value = '';
    this.folderPicker().nativeElement.value = '';
  }
}

/** Every byte of the request body is sent: from now on the server's progress is what moves. */
function isTransferComplete(event: PolledUpload): boolean {
  return (
    event.type === HttpEventType.UploadProgress &&
    (event.total ?? 0) > 0 &&
    event.loaded >= (event.total ?? 0)
  );
}

/** "series 4, CT, 120 slices", with the lossy note when the pixels went through one. */
function seriesSummary(series: ImageSeriesView): string {
  const number = series.seriesNumber === null ? 'series' : `series ${series.seriesNumber}`;
  const note = compressionNote(series.compression);
  return `${number}, ${series.modality}, ${series.sliceCount} slices.${note ? ` ${note}` : ''}`;
}
