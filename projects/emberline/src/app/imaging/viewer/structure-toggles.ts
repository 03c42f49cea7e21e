import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import { MatSlider, MatSliderThumb } from '@angular/material/slider';
import { structureKindLabels } from '@emberline/shared';
import { ViewerSession } from './viewer-session';

/** Which structures show in the views, in their kind's colour, and how opaque they are. */
@Component({
  selector: 'em-structure-toggles',
  imports: [MatCheckbox, MatSlider, MatSliderThumb, MatButton],
  template: `
    <h3 id="structure-toggles-title">Structures</h3>
    @if (rows().length) {
      <ul class="toggles" aria-labelledby="structure-toggles-title">
        @for (row of rows(); track row.labelValue) {
          <li>
            <mat-checkbox
              [checked]="row.isVisible"
              (change)="toggle(row.labelValue, $event.checked)"
            >
              <span class="swatch" aria-hidden="true" [style.background-color]="row.colour"></span>
              {{ row.name }} <span class="em-muted">· {{ row.kindLabel }}</span>
            </mat-checkbox>
          </li>
        }
      </ul>
      <div class="em-actions">
        <button mat-button type="button" (click)="showAll()">Show all</button>
        <button mat-button type="button" (click)="hideAll()">Hide all</button>
      </div>
      <label class="opacity" for="structure-opacity">Opacity {{ percent() }} %</label>
      <mat-slider min="0" max="100" step="5" discrete>
        <input
          id="structure-opacity"
          matSliderThumb
          [value]="percent()"
          (valueChange)="setOpacity($event)"
        />
      </mat-slider>
      <p class="em-note">In 3D the skin shows at a fifth and the liver at two fifths of it.</p>
    } @else {
      <p class="em-note">No structures imported for this series.</p>
    }
  `,
  styles: `
    :host {
      display: flex;
      flex-direction: column;
      gap: 4px;
    }
    .toggles {
      list-style: none;
      margin: 0;
      padding: 0;
      max-height: 260px;
      overflow-y: auto;
    }
    .swatch {
      display: inline-block;
      width: 12px;
      height: 12px;
      margin-right: 4px;
      border-radius: 3px;
      vertical-align: -1px;
      border: 1px solid rgb(0 0 0 / 25%);
    }
    .opacity {
      font: var(--mat-sys-label-medium);
    }
    .em-note {
      margin: 0;
      font: var(--mat-sys-body-small);
      color: var(--mat-sys-on-surface-variant);
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StructureToggles {
  private readonly session = inject(ViewerSession);

  protected readonly rows = computed(() => {
    const appearance = this.session.appearance();
    const present = new Set(this.session.labelMap()?.labelValues ?? []);
    return this.session
      .structures()
      .filter((structure) => present.has(structure.labelValue))
      .map((structure) => ({
        labelValue: structure.labelValue,
        name: structure.name,
        kindLabel: structure.kind ? structureKindLabels[structure.kind] : 'Not mapped',
        colour: appearance.colours.get(structure.labelValue) ?? '#ffffff',
        isVisible: appearance.visible.has(structure.labelValue),
      }));
  });
  protected readonly percent = computed(() => Math.round(this.session.opacity() * 100));

  protected toggle(labelValue: number, isVisible: boolean): void {
    this.session.hiddenLabels.update((hidden) => {
      const next = new Set(hidden);
      if (isVisible) next.delete(labelValue);
      else next.add(labelValue);
      return next;
    });
  }

  protected showAll(): void {
    this.session.hiddenLabels.set(new Set());
  }

  protected hideAll(): void {
    this.session.hiddenLabels.set(new Set(this.session.labelMap()?.labelValues ?? []));
  }

  protected setOpacity(percent: number): void {
    this.session.opacity.set(percent / 100);
  }
}
