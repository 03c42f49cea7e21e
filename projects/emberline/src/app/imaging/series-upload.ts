import { HttpEventType, type HttpEvent } from '@angular/common/http';
import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  computed,
  inject,
  input,
  output,
  signal,
} from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import type { ImageSeriesView } from '@emberline/shared';
import type { Subscription } from 'rxjs';
import { problemMessage } from '../core/problem';
import { byteSize } from './byte-size';
import { SeriesApi } from './series-api';

type UploadPhase = 'idle' | 'sending' | 'reading';

/**
 * Upload of one series: many DICOM files, or one zip of them. The transfer shows a determinate
 * bar; once every byte is sent, the server's reading and de-identification an indeterminate one.
 * A refusal keeps the chosen files, so that the presenter can fix the choice or try again.
 */
@Component({
  selector: 'em-series-upload',
  imports: [MatButton, MatIcon, MatProgressBar],
  templateUrl: './series-upload.html',
  styleUrl: './series-upload.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SeriesUpload {
  private readonly api = inject(SeriesApi);
  private readonly destroyRef = inject(DestroyRef);
  private transfer: Subscription | null = null;

  readonly caseId = input.required<string>();
  readonly uploaded = output<ImageSeriesView>();

  protected readonly files = signal<readonly File[]>([]);
  protected readonly phase = signal<UploadPhase>('idle');
  protected readonly sentPercent = signal(0);
  protected readonly errorText = signal('');
  protected readonly doneText = signal('');
  protected readonly isDragOver = signal(false);

  protected readonly isBusy = computed(() => this.phase() !== 'idle');
  protected readonly choiceSummary = computed(() => {
    const files = this.files();
    if (!files.length) return 'No file chosen.';
    const total = files.reduce((sum, file) => sum + file.size, 0);
    const count = files.length === 1 ? '1 file' : `${files.length} files`;
    return `${count} chosen, ${byteSize(total)} in all.`;
  });
  /** Why the choice cannot be sent as it is, or '' when it can. */
  private readonly choiceProblem = computed(() => {
    const files = this.files();
    if (!files.length) return 'Choose the DICOM files of one series, or one zip of them.';
    const zips = files.filter((file) => /\.zip$/i.test(file.name));
    if (zips.length && files.length > 1) {
      return 'A zip is sent on its own: choose either one zip or the DICOM files themselves.';
    }
    return '';
  });

  protected choose(event: Event): void {
    const picker = event.target as HTMLInputElement;
    this.take(Array.from(picker.files ?? []));
  }

  protected dragOver(event: DragEvent): void {
    event.preventDefault();
    this.isDragOver.set(!this.isBusy());
  }

  protected drop(event: DragEvent): void {
    event.preventDefault();
    this.isDragOver.set(false);
    if (this.isBusy()) return;
    this.take(Array.from(event.dataTransfer?.files ?? []));
  }

  protected clear(picker: HTMLInputElement): void {
    picker.value = '';
    this.files.set([]);
    this.errorText.set('');
  }

  protected send(picker: HTMLInputElement): void {
    const problem = this.choiceProblem();
    if (problem) {
      this.errorText.set(problem);
      return;
    }
    this.errorText.set('');
    this.doneText.set('');
    this.sentPercent.set(0);
    this.phase.set('sending');
    this.transfer = this.api
      .upload(this.caseId(), this.files())
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (event) => this.follow(event, picker),
        error: (error: unknown) => {
          this.phase.set('idle');
          this.transfer = null;
          this.errorText.set(`The series was not stored. ${problemMessage(error)}`);
        },
      });
  }

  protected cancel(): void {
    this.transfer?.unsubscribe();
    this.transfer = null;
    this.phase.set('idle');
    this.errorText.set('The upload was cancelled; the files are still chosen.');
  }

  private take(files: File[]): void {
    if (!files.length) return;
    this.files.set(files);
    this.errorText.set('');
    this.doneText.set('');
  }

  private follow(event: HttpEvent<ImageSeriesView>, picker: HTMLInputElement): void {
    if (event.type === HttpEventType.UploadProgress) {
      const total = event.total ?? 0;
      if (total > 0) this.sentPercent.set(Math.min(100, Math.round((100 * event.loaded) / total)));
      if (total > 0 && event.loaded >= total) this.phase.set('reading');
    } else if (event.type === HttpEventType.Response && event.body) {
      const series = event.body;
      this.phase.set('idle');
      this.transfer = null;
      picker.value = '';
      this.files.set([]);
      this.doneText.set(`Series stored: ${series.modality}, ${series.sliceCount} slices.`);
      this.uploaded.emit(series);
    }
  }
}
