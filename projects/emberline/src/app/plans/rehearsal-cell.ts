import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import type { RehearsalCell as Cell } from './comparison-rows';
import { RehearsalPlot, defaultTipErrorThresholdMm } from './rehearsal-plot';

/**
 * One applicator's rehearsal in a column of the comparison: the plot of its tip error along the
 * insertion, how the run was set up, the engine's note on an incomplete run, and "Replay in 3D".
 * The replay lives with the viewer and brings vtk.js with it: it is loaded on the first click,
 * so the Plans section's own code stays small.
 */
@Component({
  selector: 'em-rehearsal-cell',
  imports: [MatButton, MatIcon, RehearsalPlot],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <em-rehearsal-plot
      [rehearsal]="cell().rehearsal"
      [thresholdMm]="thresholdMm()"
      [subject]="subject()"
    />
    <p class="run" data-rehearsal-run>{{ cell().runLine }}</p>
    @if (cell().note) {
      <p class="run" data-rehearsal-note>{{ cell().note }}</p>
    }
    <button
      mat-stroked-button
      type="button"
      class="screen-only"
      data-testid="rehearsal-open-replay"
      [disabled]="isOpening()"
      (click)="openReplay()"
    >
      <mat-icon aria-hidden="true">view_in_ar</mat-icon>
      Replay in 3D<span class="hidden-text">: {{ subject() }}</span>
    </button>
    @if (openProblem()) {
      <p class="em-error-text" role="alert">{{ openProblem() }}</p>
    }
  `,
  styles: `
    :host {
      display: flex;
      flex-direction: column;
      align-items: flex-start;
      gap: 6px;
    }

    .run {
      margin: 0;
      max-width: 360px;
      font: var(--mat-sys-body-small);
      color: var(--mat-sys-on-surface-variant);
    }

    .hidden-text {
      position: absolute;
      width: 1px;
      height: 1px;
      overflow: hidden;
      clip-path: inset(50%);
      white-space: nowrap;
    }

    @media print {
      .screen-only {
        display: none;
      }
    }
  `,
})
export class RehearsalCell {
  private readonly dialog = inject(MatDialog);

  readonly cell = input.required<Cell>();
  readonly thresholdMm = input(defaultTipErrorThresholdMm);

  protected readonly subject = computed(
    () => `applicator ${this.cell().rehearsal.applicatorIndex + 1} of ${this.cell().planName}`,
  );
  protected readonly isOpening = signal(false);
  protected readonly openProblem = signal('');

  protected async openReplay(): Promise<void> {
    const cell = this.cell();
    this.isOpening.set(true);
    this.openProblem.set('');
    try {
      const { openRehearsalReplay } =
        await import('../imaging/viewer/rehearsal/rehearsal-replay-dialog');
      openRehearsalReplay(this.dialog, {
        assessmentId: cell.assessmentId,
        applicatorIndex: cell.rehearsal.applicatorIndex,
        planName: cell.planName,
      });
    } catch {
      // The chunk could not be fetched (the server restarted with a new build, or went away).
      this.openProblem.set('The 3D replay could not be loaded. Reload the page and try again.');
    } finally {
      this.isOpening.set(false);
    }
  }
}
