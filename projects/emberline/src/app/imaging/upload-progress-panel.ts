import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatProgressBar } from '@angular/material/progress-bar';
import type { UploadProgress } from '@emberline/shared';

const stageTexts: Record<UploadProgress['stage'], string> = {
  reading: 'Reading the files and sorting them into series…',
  decoding: 'Decoding and de-identifying the pixels…',
  storing: 'Storing the de-identified series…',
  done: 'Finished on the server; waiting for its answer…',
  failed: 'The server could not finish; its reason follows in a moment.',
};

/** Percent of `done` in `total`, 0 to 100; 0 while the total is not known. */
function percent(done: number, total: number): number {
  return total > 0 ? Math.min(100, Math.round((100 * done) / total)) : 0;
}

/**
 * The server's progress with an upload or a keep: the stage in words, a bar for the files read
 * and one for each series being decoded. Before the first answer of the progress poll it shows
 * `pendingText` under an indeterminate bar.
 */
@Component({
  selector: 'em-upload-progress-panel',
  imports: [MatProgressBar],
  templateUrl: './upload-progress-panel.html',
  styleUrl: './upload-progress-panel.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class UploadProgressPanel {
  readonly progress = input.required<UploadProgress | null>();
  readonly pendingText = input.required<string>();

  protected readonly stageText = computed(() => {
    const progress = this.progress();
    return progress ? stageTexts[progress.stage] : this.pendingText();
  });
  protected readonly files = computed(() => {
    const files = this.progress()?.files;
    if (!files || files.total <= 0) return null;
    return { ...files, percent: percent(files.done, files.total) };
  });
  protected readonly series = computed(() =>
    (this.progress()?.series ?? []).map((item) => ({
      ...item,
      percent: percent(item.done, item.total),
    })),
  );
}
