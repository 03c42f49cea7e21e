import { ChangeDetectionStrategy, Component, input } from '@angular/core';
import { MatIcon } from '@angular/material/icon';
import { clinicalCaution } from '@emberline/shared';

/** The caution every score, suggestion and verdict carries (`clinicalCaution` of shared/). */
@Component({
  selector: 'em-clinical-caution',
  imports: [MatIcon],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <mat-icon aria-hidden="true">info</mat-icon>
    <p>{{ text() }}</p>
  `,
  styles: `
    :host {
      display: flex;
      gap: 8px;
      align-items: flex-start;
      padding: 8px 12px;
      border-radius: var(--mat-sys-corner-small);
      background: var(--em-caution);
      color: var(--em-on-caution);
      font: var(--mat-sys-body-small);
    }

    mat-icon {
      flex: none;
      font-size: 20px;
      width: 20px;
      height: 20px;
    }

    p {
      margin: 0;
    }
  `,
})
export class ClinicalCaution {
  readonly text = input(clinicalCaution);
}
