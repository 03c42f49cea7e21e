import { DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { structureKindLabels, type StructureKind } from '@emberline/shared';
import { ClinicalCaution } from '../../../core/clinical-caution';
import type { PathFigures } from './clearance-fields';

/**
 * The live figures of the selected applicator's path: its length against the profile's working
 * length, its angle from the axial plane, and its closest approach to every structure kind
 * present, nearest first — with the clinical caution beside them.
 */
@Component({
  selector: 'em-path-figures',
  imports: [DecimalPipe, ClinicalCaution],
  template: `
    <h4 id="path-figures-title">Live figures</h4>
    @if (figures(); as current) {
      <dl class="figures" aria-labelledby="path-figures-title" aria-live="polite">
        <div>
          <dt>Path length</dt>
          <dd data-figure="length">
            {{ current.lengthMm | number: '1.1-1' }} mm
            @if (workingLengthMm(); as working) {
              <span [class.is-over]="current.lengthMm > working">
                of {{ working | number: '1.0-0' }} mm working length
              </span>
            }
          </dd>
        </div>
        <div>
          <dt>Angle from the axial plane</dt>
          <dd>{{ current.angleFromAxialDeg | number: '1.0-0' }}°</dd>
        </div>
      </dl>
      <table class="clearances" aria-label="Closest approach of the path to each structure kind">
        <thead>
          <tr>
            <th scope="col">Structure</th>
            <th scope="col" class="number">Clearance</th>
          </tr>
        </thead>
        <tbody>
          @for (row of rows(); track row.kind) {
            <tr [attr.data-kind]="row.kind">
              <th scope="row">{{ row.label }}</th>
              <td class="number">{{ row.text }}</td>
            </tr>
          }
        </tbody>
      </table>
      <p class="em-note">
        Distances to the faces of the label map's voxels, as the assessment measures them; in
        brackets the least each could be if the structure's surface lay a voxel nearer than labelled
        (up to a voxel diagonal, {{ 2 * halfDiagonalMm() | number: '1.1-1' }} mm).
        @if (totalMs() !== null) {
          Fields computed in {{ (totalMs() ?? 0) / 1000 | number: '1.1-1' }} s.
        }
      </p>
    } @else {
      <p class="em-note">Place a target and an entry to see the path's figures.</p>
    }
    <em-clinical-caution />
  `,
  styles: `
    :host {
      display: flex;
      flex-direction: column;
      gap: 6px;
    }
    h4 {
      margin: 0;
      font: var(--mat-sys-title-small);
    }
    .figures {
      margin: 0;
      display: grid;
      gap: 2px;
      div {
        display: flex;
        justify-content: space-between;
        gap: 8px;
      }
      dt {
        color: var(--mat-sys-on-surface-variant);
      }
      dd {
        margin: 0;
        font-variant-numeric: tabular-nums;
        text-align: right;
      }
    }
    .is-over {
      color: var(--mat-sys-error);
      font-weight: 500;
    }
    .clearances {
      border-collapse: collapse;
      width: 100%;
      font: var(--mat-sys-body-small);
      th,
      td {
        padding: 2px 4px;
        border-bottom: 1px solid var(--mat-sys-outline-variant);
        text-align: left;
        font-weight: normal;
      }
      .number {
        text-align: right;
        font-variant-numeric: tabular-nums;
      }
    }
    .em-note {
      margin: 0;
      font: var(--mat-sys-body-small);
      color: var(--mat-sys-on-surface-variant);
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class PathFiguresPanel {
  readonly figures = input<PathFigures | null>(null);
  /** Kinds whose field exists for this series, in display order. */
  readonly fieldKinds = input<readonly StructureKind[]>([]);
  readonly readyKinds = input<ReadonlySet<StructureKind>>(new Set());
  readonly workingLengthMm = input<number | null>(null);
  readonly totalMs = input<number | null>(null);
  readonly halfDiagonalMm = input(0);

  /** Nearest first; kinds still computing and those out of reach at the end. */
  protected readonly rows = computed(() => {
    const clearances = new Map(
      (this.figures()?.clearances ?? []).map((entry) => [entry.kind, entry]),
    );
    const rows = this.fieldKinds().map((kind) => {
      const entry = clearances.get(kind);
      let text = 'computing…';
      let order = Number.POSITIVE_INFINITY;
      if (entry && this.readyKinds().has(kind)) {
        if (entry.insideMm > 0) {
          text = `crosses, ${entry.insideMm.toFixed(1)} mm inside`;
          order = -1;
        } else if (entry.clearanceMm === null) {
          text = `more than ${entry.paddingMm} mm`;
          order = entry.paddingMm + 1;
        } else {
          const bound = entry.lowerBoundMm?.toFixed(1);
          const nominal = entry.clearanceMm.toFixed(1);
          text =
            bound === undefined || bound === nominal
              ? `${nominal} mm`
              : `${nominal} mm (≥ ${bound} mm)`;
          order = entry.clearanceMm;
        }
      }
      return { kind, label: structureKindLabels[kind], text, order };
    });
    return rows.sort((a, b) => a.order - b.order);
  });
}
