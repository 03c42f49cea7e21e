import { DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import type { Vec3 } from '@emberline/shared';
import { ViewerSession } from './viewer-session';

/**
 * The read-outs under the views: the crosshair, the pointer and the measured distance in patient
 * coordinates. A strip of its own, so that the controls above the views stay one compact row and
 * a read-out appearing never moves the views.
 */
@Component({
  selector: 'em-viewer-readouts',
  imports: [DecimalPipe, MatButton],
  template: `
    <dl class="readouts">
      @if (cursor(); as point) {
        <div class="readout" data-readout="crosshair">
          <dt>Crosshair</dt>
          <dd>
            LPS ({{ point[0] | number: '1.1-1' }}, {{ point[1] | number: '1.1-1' }},
            {{ point[2] | number: '1.1-1' }}) mm
            @if (cursorVoxel(); as voxel) {
              · voxel {{ voxelText(voxel) }}
            }
            @if (cursorValue() !== null) {
              · {{ cursorValue() }} {{ unit() }}
            }
          </dd>
        </div>
      }
      @if (hover(); as reading) {
        <div class="readout" data-readout="pointer">
          <dt>Pointer</dt>
          <dd>
            LPS ({{ reading.pointLps[0] | number: '1.1-1' }},
            {{ reading.pointLps[1] | number: '1.1-1' }},
            {{ reading.pointLps[2] | number: '1.1-1' }}) mm
            @if (reading.value !== null) {
              · {{ reading.value }} {{ unit() }}
            }
          </dd>
        </div>
      }
      @if (measurement(); as measured) {
        <div class="readout" data-readout="distance">
          <dt>Distance</dt>
          <dd>
            @if (measurementMm() !== null) {
              <strong>{{ measurementMm() | number: '1.1-1' }} mm</strong>
              <span class="em-muted"
                >(straight line in patient space, {{ measured.view }} view)</span
              >
            } @else {
              Click the second point on the {{ measured.view }} view.
            }
            <button mat-button type="button" (click)="clearMeasurement()">Clear</button>
          </dd>
        </div>
      } @else if (mode() === 'measure') {
        <div class="readout">
          <dt>Distance</dt>
          <dd>Click two points on a slice view.</dd>
        </div>
      }
    </dl>
  `,
  styles: `
    :host {
      display: block;
      /* Material's text button at density −3, so that Clear fits the strip's height. */
      --mat-button-text-container-height: 28px;
    }

    .readouts {
      display: flex;
      flex-wrap: wrap;
      align-items: center;
      align-content: flex-start;
      gap: 0 24px;
      margin: 0;
      /*
       * A fixed height of two lines (the crosshair, the pointer and the distance with its Clear
       * button wrap onto a second line on a narrower box): the views above never change size
       * while the user points and clicks, so a click lands where it was aimed.
       */
      height: 56px;
      overflow: hidden;
    }

    .readout {
      display: flex;
      gap: 6px;
      align-items: baseline;
    }

    dt {
      font: var(--mat-sys-label-medium);
      color: var(--mat-sys-on-surface-variant);
    }

    dd {
      margin: 0;
      font: var(--mat-sys-body-medium);
      font-variant-numeric: tabular-nums;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ViewerReadouts {
  private readonly session = inject(ViewerSession);

  protected readonly mode = this.session.mode;
  protected readonly unit = computed(() =>
    this.session.volume()?.valueUnit === 'HU' ? 'HU' : 'units',
  );
  protected readonly cursor = this.session.cursorLps;
  protected readonly cursorVoxel = this.session.cursorVoxel;
  protected readonly cursorValue = this.session.cursorValue;
  protected readonly hover = this.session.hover;
  protected readonly measurement = this.session.measurement;
  protected readonly measurementMm = this.session.measurementMm;

  protected clearMeasurement(): void {
    this.measurement.set(null);
  }

  /** Rounded voxel indices as text: "(96, 80, 32)". */
  protected voxelText(voxel: Readonly<Vec3>): string {
    return `(${voxel.map((value) => Math.round(value)).join(', ')})`;
  }
}
