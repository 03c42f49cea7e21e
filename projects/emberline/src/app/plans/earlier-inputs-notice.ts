import { ChangeDetectionStrategy, Component, input } from '@angular/core';
import { MatIcon } from '@angular/material/icon';
import type { InputChange } from '@emberline/shared';

/**
 * "Assessed on earlier inputs": what changed since the plan's newest assessment ran (a new
 * label map, a newer profile version …), each change in the server's words. The figures shown
 * stay those of the earlier inputs, as an assessment is a frozen record; a new assessment is
 * what brings today's inputs in. The button that asks for it sits with the plan's actions.
 */
@Component({
  selector: 'em-earlier-inputs-notice',
  imports: [MatIcon],
  changeDetection: ChangeDetectionStrategy.OnPush,
  host: {
    role: 'note',
    'aria-label': 'Assessed on earlier inputs',
    '[attr.data-earlier-inputs]': 'true',
  },
  template: `
    <p class="title">
      <mat-icon aria-hidden="true">history</mat-icon>
      Assessed on earlier inputs
    </p>
    <p class="lead">Since this assessment ran:</p>
    <ul>
      @for (change of changes(); track $index) {
        <li [attr.data-change-kind]="change.kind">{{ change.message }}</li>
      }
    </ul>
    <p class="lead">
      Its figures and verdict are those of the earlier inputs; a new assessment uses today’s.
    </p>
  `,
  styles: `
    :host {
      display: block;
      padding: 8px 12px;
      border-left: 4px double var(--em-ember);
      background: var(--em-caution);
      color: var(--em-on-caution);
      border-radius: var(--mat-sys-corner-extra-small);
    }

    .title {
      display: flex;
      align-items: center;
      gap: 6px;
      margin: 0;
      font: var(--mat-sys-title-small);

      mat-icon {
        font-size: 20px;
        width: 20px;
        height: 20px;
      }
    }

    .lead {
      margin: 4px 0 0;
      font: var(--mat-sys-body-small);
    }

    ul {
      margin: 4px 0 0;
      padding-left: 20px;
      font: var(--mat-sys-body-medium);
    }
  `,
})
export class EarlierInputsNotice {
  readonly changes = input.required<readonly InputChange[]>();
}
