import {
  ChangeDetectionStrategy,
  Component,
  ElementRef,
  afterRenderEffect,
  computed,
  inject,
  input,
  viewChild,
} from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import type { PlanView, ZoneModel } from '@emberline/shared';
import { problemMessage } from '../../core/problem';
import { zoneStyles } from '../../imaging/viewer/assessment/zone-styles';
import { structureKindColours } from '../../imaging/structure-kind-colours';
import { AssessmentDisplays } from './assessment-displays';
import { planPictureScene, type PlanPictureScene } from './plan-picture-scene';
import { drawPlanPicture, pictureGround } from './plan-picture-drawing';

/** The picture's side on screen, CSS pixels. */
export const pictureSizePx = 176;

/**
 * A small picture of an assessed plan for the summary band: the slice through the needle with
 * the zone outlines and the tumour, drawn on a 2D canvas from the assessment's stored display
 * data (no 3D library), its orientation letters at the edges and a scale bar in mm.
 */
@Component({
  selector: 'em-plan-slice-picture',
  changeDetection: ChangeDetectionStrategy.OnPush,
  host: {
    '[attr.data-picture-state]': 'state()',
  },
  template: `
    <figure>
      <canvas
        #canvas
        [attr.width]="pixels"
        [attr.height]="pixels"
        [style.width.px]="size"
        [style.height.px]="size"
        role="img"
        [attr.aria-label]="label()"
      ></canvas>
      <figcaption>
        @switch (state()) {
          @case ('loading') {
            <span class="em-note">Drawing the slice…</span>
          }
          @case ('failed') {
            <span class="em-error-text">The picture could not be drawn. {{ problem() }}</span>
          }
          @case ('empty') {
            <span class="em-note">The plan has no applicator to draw.</span>
          }
          @case ('drawn') {
            <span class="caption" data-picture-caption>{{ caption() }}</span>
            <span class="legend">
              @for (zone of legendZones(); track zone.model) {
                <span class="key">
                  <svg width="18" height="10" aria-hidden="true">
                    <rect width="18" height="10" rx="2" [attr.fill]="ground" />
                    <line
                      x1="1"
                      y1="5"
                      x2="17"
                      y2="5"
                      [attr.stroke]="zone.colour"
                      stroke-width="2"
                      [attr.stroke-dasharray]="zone.dash"
                    />
                  </svg>
                  {{ zone.label }}
                </span>
              }
              <span class="key">
                <svg width="10" height="10" aria-hidden="true">
                  <rect width="10" height="10" rx="2" [attr.fill]="ground" />
                  <circle cx="5" cy="5" r="2" [attr.fill]="tumourColour" />
                </svg>
                Tumour surface
              </span>
              @if (hasOutside()) {
                <span class="key">
                  <svg width="10" height="10" aria-hidden="true">
                    <rect width="10" height="10" rx="2" [attr.fill]="ground" />
                    <circle cx="5" cy="5" r="3" fill="none" stroke="#ffffff" stroke-width="1" />
                  </svg>
                  Outside the zone
                </span>
              }
            </span>
          }
        }
      </figcaption>
    </figure>
  `,
  styles: `
    :host {
      display: block;
      width: 176px;
    }

    figure {
      margin: 0;
      display: flex;
      flex-direction: column;
      gap: 4px;
    }

    canvas {
      display: block;
      border-radius: var(--mat-sys-corner-extra-small);
    }

    figcaption {
      display: flex;
      flex-direction: column;
      gap: 2px;
      font: var(--mat-sys-body-small);
      color: var(--mat-sys-on-surface-variant);
    }

    .legend {
      display: flex;
      flex-wrap: wrap;
      gap: 2px 8px;
    }

    .key {
      display: inline-flex;
      align-items: center;
      gap: 3px;
    }
  `,
})
export class PlanSlicePicture {
  private readonly displays = inject(AssessmentDisplays);
  private readonly canvas = viewChild.required<ElementRef<HTMLCanvasElement>>('canvas');

  readonly plan = input.required<Pick<PlanView, 'applicators' | 'name'>>();
  readonly assessmentId = input.required<string>();
  readonly primaryModel = input.required<ZoneModel>();

  protected readonly size = pictureSizePx;
  /** Drawn at twice the CSS size, so that it stays sharp on dense screens and on paper. */
  protected readonly pixels = pictureSizePx * 2;
  protected readonly tumourColour = structureKindColours.tumour;
  /** The keys sit on the slice's dark ground, where the light outline colours read. */
  protected readonly ground = pictureGround;

  private readonly display = rxResource({
    params: () => this.assessmentId(),
    stream: ({ params }) => this.displays.of(params),
  });
  protected readonly scene = computed<PlanPictureScene | null>(() =>
    this.display.hasValue()
      ? planPictureScene(this.plan(), this.display.value(), this.primaryModel())
      : null,
  );
  protected readonly state = computed(() => {
    if (this.display.error()) return 'failed';
    if (!this.display.hasValue()) return 'loading';
    return this.scene() ? 'drawn' : 'empty';
  });
  protected readonly problem = computed(() => {
    const error = this.display.error();
    return error ? problemMessage(error) : '';
  });
  protected readonly caption = computed(() => {
    const scene = this.scene();
    if (!scene) return '';
    const tilt = Math.round(scene.plane.tiltFromAxialDeg);
    return (
      `Through the needle, ${tilt === 0 ? 'axial' : `${tilt}° from axial`} · ` +
      `${scene.letters.right} to the right, ${scene.letters.bottom} down · bar ${scene.scaleBarMm} mm`
    );
  });
  protected readonly label = computed(() => {
    const scene = this.scene();
    const name = this.plan().name;
    if (!scene) return `Picture of ${name}: ${this.state() === 'loading' ? 'drawing' : 'none'}`;
    return (
      `Picture of ${name}. ${scene.description} Patient ${scene.letters.right} to the right, ` +
      `${scene.letters.bottom} downwards; the scale bar is ${scene.scaleBarMm} mm.`
    );
  });
  protected readonly hasOutside = computed(() =>
    (this.scene()?.tumour ?? []).some((mark) => mark.marginMm < 0),
  );
  protected readonly legendZones = computed(() =>
    (this.scene()?.zones ?? [])
      .filter((zone) => zone.loops.length)
      .map((zone) => ({
        model: zone.model,
        label: zoneStyles[zone.model].label + (zone.isPrimary ? ' (verdict)' : ''),
        colour: zoneStyles[zone.model].colour,
        dash: zoneStyles[zone.model].dash,
      })),
  );

  constructor() {
    afterRenderEffect({ write: () => this.draw() });
  }

  private draw(): void {
    const scene = this.scene();
    const context = this.canvas().nativeElement.getContext('2d');
    // No 2D context (a test DOM without canvas): the caption and the label still say it all.
    if (!context) return;
    context.setTransform(1, 0, 0, 1, 0, 0);
    context.clearRect(0, 0, this.pixels, this.pixels);
    if (scene) drawPlanPicture(context, scene, this.pixels);
  }
}
