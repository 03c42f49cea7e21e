import { ChangeDetectionStrategy, Component, input } from '@angular/core';
import { caseStatusLabels, type CaseStatus } from '@emberline/shared';

/** A case's state as a small label; "ready for board" stands out in ember. */
@Component({
  selector: 'em-case-status-badge',
  changeDetection: ChangeDetectionStrategy.OnPush,
  host: { '[class]': '"status-" + status()' },
  template: '{{ labels[status()] }}',
  styles: `
    :host {
      display: inline-block;
      padding: 2px 10px;
      border-radius: 999px;
      font: var(--mat-sys-label-medium);
      white-space: nowrap;
      background: var(--mat-sys-surface-container-high);
      color: var(--mat-sys-on-surface);
    }

    :host(.status-ready-for-board),
    :host(.status-on-agenda) {
      background: var(--mat-sys-tertiary-container);
      color: var(--mat-sys-on-tertiary-container);
    }

    :host(.status-decided),
    :host(.status-booked) {
      background: var(--mat-sys-primary-container);
      color: var(--mat-sys-on-primary-container);
    }
  `,
})
export class CaseStatusBadge {
  readonly status = input.required<CaseStatus>();
  protected readonly labels = caseStatusLabels;
}
