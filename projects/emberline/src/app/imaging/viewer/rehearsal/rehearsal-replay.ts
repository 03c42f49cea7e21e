import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  ElementRef,
  InjectionToken,
  afterRenderEffect,
  computed,
  inject,
  input,
  linkedSignal,
  signal,
  viewChild,
} from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatButtonToggle, MatButtonToggleGroup } from '@angular/material/button-toggle';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatSlider, MatSliderThumb } from '@angular/material/slider';
import type { RehearsalReplay as Replay } from '@emberline/shared';
import { problemMessage } from '../../../core/problem';
import { RehearsalCaution } from '../../../plans/rehearsal-caution';
import { formatFigure } from '../../../plans/verdict-reason-lines';
import { hasWebGl2, noWebGl2Message } from '../webgl-support';
import {
  ReplayDataError,
  checkedReplay,
  clampIndex,
  frameReadout,
  frameShapes,
  nearestFrameIndex,
  replayModeLabels,
  tipToTargetMm,
  type ReplayGeometry,
  type ReplayMode,
} from './rehearsal-frames';
import { RehearsalReplayApi } from './rehearsal-replay-api';
import { RehearsalScene, type RehearsalSceneView } from './rehearsal-scene';

/** How the replay gets its 3D scene: WebGL2 and vtk.js in the product, a recorder in tests. */
export interface RehearsalSceneFactory {
  isSupported(): boolean;
  create(host: HTMLElement): RehearsalSceneView;
}

export const REHEARSAL_SCENE_FACTORY = new InjectionToken<RehearsalSceneFactory>(
  'How the rehearsal replay draws in 3D',
  {
    providedIn: 'root',
    factory: () => ({ isSupported: hasWebGl2, create: (host) => new RehearsalScene(host) }),
  },
);

const modes: readonly ReplayMode[] = ['freehand', 'assisted'];

type Checked = { replay: Replay; geometry: ReplayGeometry } | { replay: Replay; error: string };

/**
 * The 3D replay of one applicator's insertion rehearsal: the liver surface as the simulation
 * moved and deformed it, the needle and the target, frame by frame. A slider moves through the
 * frames (time and depth read out under it), play runs them at the pace they were recorded,
 * and a toggle switches between the free-hand and the robot-assisted insertion, landing on the
 * frame nearest the same moment. Without WebGL2 the page says so and keeps the slider and the
 * read-outs. The rehearsal's caution stays in view.
 */
@Component({
  selector: 'em-rehearsal-replay',
  imports: [
    MatButton,
    MatIconButton,
    MatButtonToggle,
    MatButtonToggleGroup,
    MatIcon,
    MatProgressBar,
    MatSlider,
    MatSliderThumb,
    RehearsalCaution,
  ],
  host: { 'data-testid': 'rehearsal-replay' },
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    @switch (phase()) {
      @case ('loading') {
        <p class="em-note">Reading the rehearsal replay…</p>
        <mat-progress-bar mode="indeterminate" aria-label="Reading the rehearsal replay" />
      }
      @case ('failed') {
        <p class="em-error-text" role="alert" data-testid="rehearsal-replay-problem">
          The rehearsal replay could not be read. {{ problem() }}
        </p>
        <button mat-stroked-button type="button" (click)="data.reload()">Try again</button>
      }
      @case ('missing') {
        <p class="em-note" data-testid="rehearsal-replay-missing">{{ missingText() }}</p>
      }
      @case ('invalid') {
        <p class="em-error-text" role="alert" data-testid="rehearsal-replay-problem">
          {{ invalidText() }}
        </p>
      }
      @case ('ready') {
        <div class="bar">
          <mat-button-toggle-group
            data-testid="rehearsal-mode"
            aria-label="Which insertion to replay"
            [value]="mode()"
            (change)="setMode($event.value)"
          >
            @for (option of modeOptions(); track option.mode) {
              <mat-button-toggle
                [value]="option.mode"
                [disabled]="!option.isAvailable"
                [attr.data-mode]="option.mode"
                >{{ option.label }}</mat-button-toggle
              >
            }
          </mat-button-toggle-group>
          @if (isWebGlAvailable) {
            <button mat-button type="button" (click)="resetView()">
              <mat-icon aria-hidden="true">center_focus_strong</mat-icon>
              Reset view
            </button>
          }
        </div>
        @if (isWebGlAvailable) {
          <div
            #host
            class="host"
            role="img"
            data-testid="rehearsal-scene"
            [attr.aria-label]="sceneLabel()"
          ></div>
        } @else {
          <p class="em-note no-webgl" data-testid="rehearsal-no-webgl">
            {{ noWebGlText }} The slider and the figures below still work.
          </p>
        }
        <div class="controls">
          <button
            mat-icon-button
            type="button"
            data-testid="rehearsal-play"
            [attr.aria-label]="isPlaying() ? 'Pause the replay' : 'Play the replay'"
            [attr.aria-pressed]="isPlaying()"
            (click)="togglePlay()"
          >
            <mat-icon aria-hidden="true">{{ isPlaying() ? 'pause' : 'play_arrow' }}</mat-icon>
          </button>
          <mat-slider
            class="slider"
            [min]="0"
            [max]="lastIndex()"
            [step]="1"
            [displayWith]="valueText"
          >
            <input
              matSliderThumb
              data-testid="rehearsal-slider"
              aria-label="Moment of the replay"
              [value]="frameIndex()"
              (input)="scrub($event)"
              (valueChange)="seek($event)"
            />
          </mat-slider>
        </div>
        <p class="readout">
          <span data-testid="rehearsal-frame-readout">{{ readout() }}</span>
          <span class="em-muted" data-testid="rehearsal-frame-details">{{ details() }}</span>
        </p>
      }
    }
    <em-rehearsal-caution [text]="caution()" />
  `,
  styles: `
    :host {
      display: flex;
      flex-direction: column;
      gap: 8px;
    }

    p {
      margin: 0;
    }

    .bar,
    .controls {
      display: flex;
      flex-wrap: wrap;
      align-items: center;
      gap: 8px;
    }

    .host {
      position: relative;
      height: min(440px, 55vh);
      min-height: 240px;
      border-radius: var(--mat-sys-corner-small);
      overflow: hidden;
      background: #0d1217;
    }

    .slider {
      flex: 1 1 240px;
    }

    .readout {
      display: flex;
      flex-wrap: wrap;
      gap: 4px 16px;
      font-variant-numeric: tabular-nums;
    }

    [data-testid='rehearsal-frame-readout'] {
      font: var(--mat-sys-title-small);
    }
  `,
})
export class RehearsalReplay {
  private readonly api = inject(RehearsalReplayApi);
  private readonly sceneFactory = inject(REHEARSAL_SCENE_FACTORY);
  private readonly host = viewChild<ElementRef<HTMLElement>>('host');

  readonly assessmentId = input.required<string>();
  /** Index of the applicator in the plan (0 for the first). */
  readonly applicatorIndex = input.required<number>();
  /** Which insertion shows first. */
  readonly initialMode = input<ReplayMode>('freehand');

  protected readonly isWebGlAvailable = this.sceneFactory.isSupported();
  protected readonly noWebGlText = noWebGl2Message;

  protected readonly data = rxResource({
    params: () => this.assessmentId(),
    stream: ({ params }) => this.api.replays(params),
  });
  private readonly replays = computed<Replay[]>(() => {
    const view = this.data.hasValue() ? this.data.value() : null;
    return (view?.replays ?? []).filter(
      (replay) => replay.applicatorIndex === this.applicatorIndex(),
    );
  });
  protected readonly mode = linkedSignal<ReplayMode>(() => {
    const available = this.replays().map((replay) => replay.mode);
    return available.includes(this.initialMode())
      ? this.initialMode()
      : (available[0] ?? 'freehand');
  });
  protected readonly modeOptions = computed(() =>
    modes.map((mode) => ({
      mode,
      label: replayModeLabels[mode],
      isAvailable: this.replays().some((replay) => replay.mode === mode),
    })),
  );
  private readonly checked = computed<Checked | null>(() => {
    const replay = this.replays().find((candidate) => candidate.mode === this.mode());
    if (!replay) return null;
    try {
      return { replay, geometry: checkedReplay(replay) };
    } catch (error) {
      if (error instanceof ReplayDataError) return { replay, error: error.message };
      throw error;
    }
  });
  private readonly frames = computed(() => this.checked()?.replay.frames ?? []);
  protected readonly lastIndex = computed(() => Math.max(0, this.frames().length - 1));
  /** The frame on screen; a new replay starts at its first. */
  protected readonly frameIndex = linkedSignal<Replay | undefined, number>({
    source: () => this.checked()?.replay,
    computation: () => 0,
  });
  protected readonly isPlaying = signal(false);

  protected readonly phase = computed(() => {
    if (this.data.error()) return 'failed';
    if (this.data.isLoading() || !this.data.hasValue()) return 'loading';
    const checked = this.checked();
    if (!checked) return 'missing';
    return 'error' in checked ? 'invalid' : 'ready';
  });
  protected readonly problem = computed(() => {
    const error = this.data.error();
    if (!error) return '';
    return error instanceof ReplayDataError ? error.message : problemMessage(error);
  });
  protected readonly missingText = computed(() =>
    this.data.hasValue() && this.data.value()
      ? `The rehearsal holds no replay of applicator ${this.applicatorIndex() + 1}.`
      : 'This assessment has no insertion rehearsal to replay: it was assessed before the ' +
        'rehearsal existed, or the rehearsal was not run.',
  );
  protected readonly invalidText = computed(() => {
    const checked = this.checked();
    return checked && 'error' in checked ? checked.error : '';
  });
  protected readonly caution = computed(() =>
    this.data.hasValue() ? (this.data.value()?.caution ?? '') : '',
  );

  private readonly frame = computed(
    () => this.frames()[clampIndex(this.frameIndex(), this.frames().length)],
  );
  protected readonly readout = computed(() => {
    const frame = this.frame();
    return frame ? frameReadout(frame) : '';
  });
  /** What the slider says of a position, to screen readers: that frame's time and depth. */
  protected readonly valueText = (index: number): string => {
    const frame = this.frames()[clampIndex(index, this.frames().length)];
    return frame ? frameReadout(frame) : String(index);
  };
  protected readonly details = computed(() => {
    const frame = this.frame();
    if (!frame) return '';
    return (
      `Frame ${clampIndex(this.frameIndex(), this.frames().length) + 1} of ${this.frames().length}` +
      ` · tip to target ${formatFigure(tipToTargetMm(frame), 1, 'mm')}`
    );
  });
  protected readonly sceneLabel = computed(
    () =>
      `3D replay of the ${replayModeLabels[this.mode()].toLowerCase()} insertion of applicator ` +
      `${this.applicatorIndex() + 1}: the liver surface see-through, the needle and the target ` +
      `(ball). ${this.readout()}. ${this.details()}. Drag to turn, wheel to zoom.`,
  );

  private scene: RehearsalSceneView | null = null;
  private sceneHost: HTMLElement | null = null;
  private sceneGeometry: ReplayGeometry | null = null;
  private resizeObserver: ResizeObserver | null = null;
  private timer: ReturnType<typeof setTimeout> | undefined;
  /** When play started (wall clock, ms) and from which moment of the replay (s). */
  private playFrom = { wallMs: 0, timeS: 0 };

  constructor() {
    afterRenderEffect({ write: () => this.draw() });
    inject(DestroyRef).onDestroy(() => {
      this.pause();
      this.disposeScene();
    });
  }

  /** Puts the frame on screen, creating the scene once its box is there. */
  private draw(): void {
    const host = this.host()?.nativeElement ?? null;
    const checked = this.checked();
    const index = this.frameIndex();
    if (host !== this.sceneHost) this.disposeScene();
    if (!host || !checked || 'error' in checked) return;
    if (!this.scene) this.createScene(host);
    const scene = this.scene;
    if (!scene) return;
    if (this.sceneGeometry !== checked.geometry) {
      scene.setSurface(checked.geometry);
      this.sceneGeometry = checked.geometry;
    }
    scene.showFrame(frameShapes(checked.replay, index));
    scene.render();
  }

  private createScene(host: HTMLElement): void {
    this.scene = this.sceneFactory.create(host);
    this.sceneHost = host;
    host.querySelector('canvas')?.setAttribute('aria-hidden', 'true');
    const box = host.getBoundingClientRect();
    if (box.width > 0 && box.height > 0) this.scene.resize(box.width, box.height);
    if (typeof ResizeObserver !== 'undefined') {
      this.resizeObserver = new ResizeObserver((entries) => {
        const size = entries[0]?.contentRect;
        if (!size || size.width < 1 || size.height < 1) return;
        this.scene?.resize(size.width, size.height);
        this.scene?.render();
      });
      this.resizeObserver.observe(host);
    }
  }

  private disposeScene(): void {
    this.resizeObserver?.disconnect();
    this.resizeObserver = null;
    this.scene?.dispose();
    this.scene = null;
    this.sceneHost = null;
    this.sceneGeometry = null;
  }

  protected setMode(mode: ReplayMode): void {
    const time = this.frame()?.timeS ?? 0;
    this.mode.set(mode);
    this.frameIndex.set(nearestFrameIndex(this.frames(), time));
    if (this.isPlaying()) this.playOn();
  }

  protected seek(index: number): void {
    this.frameIndex.set(clampIndex(index, this.frames().length));
    if (this.isPlaying()) this.playOn();
  }

  /** Follows the thumb while it is dragged (the slider's own event comes on release). */
  protected scrub(event: Event): void {
    const value = Number((event.target as HTMLInputElement).value);
    if (Number.isFinite(value)) this.seek(value);
  }

  protected togglePlay(): void {
    if (this.isPlaying()) {
      this.pause();
      return;
    }
    // Play from the start again once the end was reached.
    if (this.frameIndex() >= this.lastIndex()) this.frameIndex.set(0);
    this.isPlaying.set(true);
    this.playOn();
  }

  protected resetView(): void {
    this.scene?.resetCamera();
    this.scene?.render();
  }

  private pause(): void {
    clearTimeout(this.timer);
    this.timer = undefined;
    this.isPlaying.set(false);
  }

  /** Plays on from the frame on screen, its moment tied to the wall clock from now. */
  private playOn(): void {
    this.playFrom = { wallMs: Date.now(), timeS: this.frame()?.timeS ?? 0 };
    this.schedule();
  }

  /**
   * Waits until the next frame's moment comes on the wall clock, then shows the latest frame
   * whose moment has come (frames the screen could not keep up with are skipped, so the replay
   * keeps the recorded pace); stops at the last.
   */
  private schedule(): void {
    clearTimeout(this.timer);
    const frames = this.frames();
    const index = this.frameIndex();
    if (index >= this.lastIndex()) {
      this.pause();
      return;
    }
    const elapsedMs = () => Date.now() - this.playFrom.wallMs;
    const dueMs = (frames[index + 1].timeS - this.playFrom.timeS) * 1000;
    this.timer = setTimeout(
      () => {
        const nowS = this.playFrom.timeS + elapsedMs() / 1000;
        let next = index + 1;
        while (next < frames.length - 1 && frames[next + 1].timeS <= nowS) next++;
        this.frameIndex.set(next);
        this.schedule();
      },
      Math.max(0, dueMs - elapsedMs()),
    );
  }
}
