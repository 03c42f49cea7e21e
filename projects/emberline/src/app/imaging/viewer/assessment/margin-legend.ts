import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { formatMm, legendGradient, legendTicks } from './margin-colours';
import { ZoneOverlay } from './zone-overlay';
import { zoneName } from './zone-styles';

/**
 * The legend of the margin colouring in the 3D view: the colour bar in mm with its ticks, the
 * target marked and named, and the zone model the margins are measured against.
 */
@Component({
  selector: 'em-margin-legend',
  template: `
    @if (legend(); as shown) {
      <figure class="legend" data-margin-legend>
        <figcaption>
          Local margin, mm · against the {{ shown.model }} · target {{ shown.target }} mm
        </figcaption>
        <div class="bar" aria-hidden="true" [style.background]="shown.gradient">
          <span class="target-mark" [style.left.%]="shown.targetAtPercent"></span>
        </div>
        <div class="ticks" aria-hidden="true">
          @for (tick of shown.ticks; track tick.valueMm) {
            <span class="tick" [class.is-target]="tick.isTarget" [style.left.%]="tick.atPercent">
              {{ tick.label }}
            </span>
          }
        </div>
        <p class="bands">
          <span>under 0: uncovered</span>
          <span>0 to {{ shown.target }}: short of target</span>
          <span>{{ shown.target }} and over: meets it</span>
        </p>
      </figure>
    }
  `,
  styles: `
    :host {
      position: absolute;
      left: 8px;
      right: 8px;
      bottom: 6px;
      z-index: 1;
      pointer-events: none;
    }
    .legend {
      margin: 0;
      padding: 4px 8px 3px;
      border-radius: 4px;
      background: rgb(13 18 23 / 82%);
      color: #dfe6ec;
      font:
        500 11px Roboto,
        sans-serif;
    }
    .bar {
      position: relative;
      height: 10px;
      margin-top: 3px;
      border-radius: 2px;
    }
    .target-mark {
      position: absolute;
      top: -3px;
      bottom: -3px;
      width: 2px;
      margin-left: -1px;
      background: #ffffff;
    }
    .ticks {
      position: relative;
      height: 14px;
    }
    .tick {
      position: absolute;
      transform: translateX(-50%);
      white-space: nowrap;

      &.is-target {
        font-weight: 700;
      }
    }
    .bands {
      display: flex;
      justify-content: space-between;
      gap: 8px;
      margin: 0;
      color: #9fb0bf;
      font-weight: 400;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MarginLegend {
  private readonly overlay = inject(ZoneOverlay);

  protected readonly legend = computed(() => {
    const scale = this.overlay.scale();
    if (!scale || !this.overlay.shownMargins().length) return null;
    return {
      model: zoneName(this.overlay.marginModel()),
      target: formatMm(scale.targetMm),
      targetAtPercent: ((scale.targetMm - scale.lowMm) / (scale.highMm - scale.lowMm)) * 100,
      gradient: legendGradient(scale),
      ticks: legendTicks(scale),
    };
  });
}
