import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatIcon } from '@angular/material/icon';
import { verdictLevelLabels, type VerdictLevel } from '@emberline/shared';

const levelIcons: Record<VerdictLevel, string> = {
  acceptable: 'verified',
  'acceptable-with-cautions': 'report',
  'not-acceptable': 'block',
};

/**
 * A verdict level as words with an icon; the three levels also differ in outline (solid,
 * dashed, filled dark), so nothing rests on colour. Emberline's slate and ember only.
 */
@Component({
  selector: 'em-verdict-badge',
  imports: [MatIcon],
  changeDetection: ChangeDetectionStrategy.OnPush,
  host: { '[class]': '"level-" + level()' },
  template: `<mat-icon aria-hidden="true">{{ icon() }}</mat-icon
    ><span>{{ label() }}</span>`,
  styles: `
    :host {
      display: inline-flex;
      align-items: center;
      gap: 4px;
      padding: 2px 10px 2px 6px;
      border-radius: var(--mat-sys-corner-small);
      border: 1px solid var(--mat-sys-outline);
      font: var(--mat-sys-label-large);
      white-space: nowrap;
    }

    mat-icon {
      font-size: 18px;
      width: 18px;
      height: 18px;
    }

    :host(.level-acceptable) {
      background: var(--mat-sys-primary-container);
      color: var(--mat-sys-on-primary-container);
    }

    :host(.level-acceptable-with-cautions) {
      border-style: dashed;
      border-color: var(--em-ember);
      background: var(--em-caution);
      color: var(--em-on-caution);
    }

    :host(.level-not-acceptable) {
      border-width: 2px;
      border-color: var(--mat-sys-inverse-surface);
      background: var(--mat-sys-inverse-surface);
      color: var(--mat-sys-inverse-on-surface);
    }
  `,
})
export class VerdictBadge {
  readonly level = input.required<VerdictLevel>();
  protected readonly label = computed(() => verdictLevelLabels[this.level()]);
  protected readonly icon = computed(() => levelIcons[this.level()]);
}
