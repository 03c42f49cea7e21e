import { ChangeDetectionStrategy, Component, computed, inject, input, output } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatButtonToggle, MatButtonToggleGroup } from '@angular/material/button-toggle';
import { MatFormField, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { minimumWindowWidth, presetOf, windowPresets, type DisplayWindow } from './display-window';
import { ViewerSession, type ViewerMode } from './viewer-session';

/**
 * The viewer's controls above the views, one compact row: what a click does (crosshair, measure,
 * draft, and annotate for those who may) and the display window (presets and typed values). The read-outs sit under the views
 * (`viewer-readouts.ts`).
 */
@Component({
  selector: 'em-viewer-toolbar',
  imports: [
    MatButton,
    MatButtonToggleGroup,
    MatButtonToggle,
    MatFormField,
    MatLabel,
    MatInput,
    MatSuffix,
  ],
  templateUrl: './viewer-toolbar.html',
  styleUrl: './viewer-toolbar.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ViewerToolbar {
  private readonly session = inject(ViewerSession);

  /** The series' own default window. */
  readonly seriesWindow = input.required<DisplayWindow>();
  /** Whether a plan may be drafted here (the presenter on a case they edit). */
  readonly canDraft = input(false);
  /**
   * Whether annotations may be placed here. Offered only then (not greyed out like drafting):
   * most readers never annotate, and the row stays short.
   */
  readonly canAnnotate = input(false);
  readonly modeRequested = output<ViewerMode>();

  protected readonly presets = windowPresets;
  protected readonly mode = this.session.mode;
  protected readonly window = this.session.window;
  protected readonly activePreset = computed(() => presetOf(this.window()));
  protected readonly isCt = computed(() => this.session.volume()?.valueUnit === 'HU');
  protected readonly unit = computed(() => (this.isCt() ? 'HU' : 'units'));
  protected readonly isSeriesWindow = computed(() => {
    const series = this.seriesWindow();
    const current = this.window();
    return series.centre === current.centre && series.width === current.width;
  });

  protected chooseMode(mode: ViewerMode): void {
    this.modeRequested.emit(mode);
  }

  protected apply(window: DisplayWindow): void {
    this.window.set({ ...window });
  }

  protected setCentre(event: Event): void {
    const value = Number((event.target as HTMLInputElement).value);
    if (Number.isFinite(value)) this.window.update((window) => ({ ...window, centre: value }));
  }

  protected setWidth(event: Event): void {
    const value = Number((event.target as HTMLInputElement).value);
    if (Number.isFinite(value)) {
      this.window.update((window) => ({ ...window, width: Math.max(minimumWindowWidth, value) }));
    }
  }
}
