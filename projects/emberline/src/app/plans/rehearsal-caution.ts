import { ChangeDetectionStrategy, Component, input } from '@angular/core';
import { MatIcon } from '@angular/material/icon';

/**
 * What every display of the insertion rehearsal says about it. The rehearsal runs a generic
 * liver model with tissue stiffness, needle forces and breathing assumed, not measured in the
 * patient: its figures rank approaches against each other at best, and never replace the
 * operator's own judgement at the table.
 */
export const rehearsalCaution =
  'The insertion rehearsal is a simulation estimate. It runs with assumed tissue stiffness, ' +
  'needle forces and breathing, not values measured in this patient, so its figures are not a ' +
  'prediction of what will happen at this patient’s procedure. The treating team decides, ' +
  'following local protocols and licensed practice.';

/**
 * The rehearsal's caution as a block (own element, not `em-clinical-caution`: the comparison
 * places the general caution once at its head and this one beside each rehearsal display).
 */
@Component({
  selector: 'em-rehearsal-caution',
  imports: [MatIcon],
  changeDetection: ChangeDetectionStrategy.OnPush,
  host: { role: 'note', 'data-rehearsal-caution': '' },
  template: `
    <mat-icon aria-hidden="true">science</mat-icon>
    <p>{{ text() || defaultText }}</p>
  `,
  styles: `
    :host {
      display: flex;
      gap: 8px;
      align-items: flex-start;
      padding: 6px 10px;
      border-left: 3px dashed var(--em-ember);
      border-radius: var(--mat-sys-corner-extra-small);
      background: var(--em-caution);
      color: var(--em-on-caution);
      font: var(--mat-sys-body-small);
    }

    mat-icon {
      flex: none;
      font-size: 18px;
      width: 18px;
      height: 18px;
    }

    p {
      margin: 0;
    }
  `,
})
export class RehearsalCaution {
  /** The server's own wording when it sends one (the replay does); ours otherwise. */
  readonly text = input<string | undefined>('');
  protected readonly defaultText = rehearsalCaution;
}
