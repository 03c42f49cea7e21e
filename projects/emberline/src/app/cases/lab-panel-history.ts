import { DatePipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  inject,
  input,
  output,
  signal,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatTableModule } from '@angular/material/table';
import { panelInForce, type CaseDetail, type LabPanelView } from '@emberline/shared';
import { ascitesLabels, encephalopathyLabels, unitLabels } from './clinical-labels';
import { TypedCellDef } from '../core/typed-cell-def';
import {
  ConfirmDialog,
  type ConfirmDialogData,
  type ConfirmDialogResult,
} from '../core/confirm-dialog';
import { problemMessage } from '../core/problem';
import { CaseApi } from './case-api';

/**
 * The laboratory panels of a case, newest first, as they were entered; superseded and withdrawn
 * panels stay, struck through, with the reason, who and when. For the presenter, each panel in
 * the running can be corrected (the form below, prefilled) or withdrawn (with a reason, after a
 * confirmation).
 */
@Component({
  selector: 'em-lab-panel-history',
  imports: [DatePipe, MatTableModule, MatButton, TypedCellDef],
  template: `
    @if (panels().length) {
      <div class="em-table-scroll" tabindex="0" role="region" aria-label="Laboratory panels table">
        <table mat-table [dataSource]="panels()" aria-label="Laboratory panels, newest first">
          <ng-container matColumnDef="takenAt">
            <th mat-header-cell *matHeaderCellDef>Taken</th>
            <td mat-cell *emCellDef="let panel of panels()">
              <time [attr.datetime]="panel.takenAt">{{ panel.takenAt | date: 'd MMM y' }}</time>
            </td>
          </ng-container>
          <ng-container matColumnDef="bilirubin">
            <th mat-header-cell *matHeaderCellDef>Bilirubin</th>
            <td mat-cell *emCellDef="let panel of panels()">
              {{ panel.bilirubin.value }} {{ unitLabels[panel.bilirubin.unit] }}
            </td>
          </ng-container>
          <ng-container matColumnDef="albumin">
            <th mat-header-cell *matHeaderCellDef>Albumin</th>
            <td mat-cell *emCellDef="let panel of panels()">
              {{ panel.albumin.value }} {{ unitLabels[panel.albumin.unit] }}
            </td>
          </ng-container>
          <ng-container matColumnDef="inr">
            <th mat-header-cell *matHeaderCellDef>INR</th>
            <td mat-cell *emCellDef="let panel of panels()">{{ panel.inr }}</td>
          </ng-container>
          <ng-container matColumnDef="creatinine">
            <th mat-header-cell *matHeaderCellDef>Creatinine</th>
            <td mat-cell *emCellDef="let panel of panels()">
              {{ panel.creatinine.value }} {{ unitLabels[panel.creatinine.unit] }}
            </td>
          </ng-container>
          <ng-container matColumnDef="sodium">
            <th mat-header-cell *matHeaderCellDef>Sodium</th>
            <td mat-cell *emCellDef="let panel of panels()">{{ panel.sodiumMmolL }} mmol/L</td>
          </ng-container>
          <ng-container matColumnDef="platelets">
            <th mat-header-cell *matHeaderCellDef>Platelets</th>
            <td mat-cell *emCellDef="let panel of panels()">{{ panel.plateletsE9L }} × 10⁹/L</td>
          </ng-container>
          <ng-container matColumnDef="ascites">
            <th mat-header-cell *matHeaderCellDef>Ascites</th>
            <td mat-cell *emCellDef="let panel of panels()">{{ ascitesLabels[panel.ascites] }}</td>
          </ng-container>
          <ng-container matColumnDef="encephalopathy">
            <th mat-header-cell *matHeaderCellDef>Encephalopathy</th>
            <td mat-cell *emCellDef="let panel of panels()">
              {{ encephalopathyLabels[panel.encephalopathy] }}
            </td>
          </ng-container>
          <ng-container matColumnDef="dialysis">
            <th mat-header-cell *matHeaderCellDef>Dialysis</th>
            <td mat-cell *emCellDef="let panel of panels()">
              {{ panel.dialysisTwiceInPastWeek ? 'Yes' : 'No' }}
            </td>
          </ng-container>
          <ng-container matColumnDef="enteredBy">
            <th mat-header-cell *matHeaderCellDef>Entered by</th>
            <td mat-cell *emCellDef="let panel of panels()">{{ panel.enteredBy }}</td>
          </ng-container>
          <ng-container matColumnDef="state">
            <th mat-header-cell *matHeaderCellDef>Status</th>
            <td mat-cell *emCellDef="let panel of panels()" class="state">
              @if (panel.superseded; as change) {
                <span class="retired-label">Superseded</span>
                <span class="change"
                  >{{ change.reason }} — {{ change.by }},
                  <time [attr.datetime]="change.at">{{
                    change.at | date: 'd MMM y, HH:mm'
                  }}</time></span
                >
              } @else if (panel.withdrawn; as change) {
                <span class="retired-label">Withdrawn</span>
                <span class="change"
                  >{{ change.reason }} — {{ change.by }},
                  <time [attr.datetime]="change.at">{{
                    change.at | date: 'd MMM y, HH:mm'
                  }}</time></span
                >
              } @else if (panel.id === inForceId()) {
                <span class="in-force">In force (scores)</span>
              }
              @if (panel.correctsPanelId) {
                <span class="change">Correction</span>
              }
            </td>
          </ng-container>
          <ng-container matColumnDef="actions">
            <th mat-header-cell *matHeaderCellDef>
              <span class="cdk-visually-hidden">Actions</span>
            </th>
            <td mat-cell *emCellDef="let panel of panels()" class="actions">
              @if (!panel.superseded && !panel.withdrawn) {
                <button
                  mat-button
                  type="button"
                  [disabled]="isBusy()"
                  [attr.aria-label]="'Correct the panel taken ' + (panel.takenAt | date: 'd MMM y')"
                  (click)="correct.emit(panel)"
                >
                  Correct…
                </button>
                <button
                  mat-button
                  type="button"
                  [disabled]="isBusy()"
                  [attr.aria-label]="
                    'Withdraw the panel taken ' + (panel.takenAt | date: 'd MMM y')
                  "
                  (click)="confirmWithdrawal(panel)"
                >
                  Withdraw…
                </button>
              }
            </td>
          </ng-container>
          <tr mat-header-row *matHeaderRowDef="columns()"></tr>
          <tr
            mat-row
            *matRowDef="let row; columns: columns()"
            [class.retired]="!!row.superseded || !!row.withdrawn"
          ></tr>
        </table>
      </div>
      @if (errorText()) {
        <p class="em-error-text" role="alert">{{ errorText() }}</p>
      }
    } @else {
      <p class="em-note">No laboratory panel yet.</p>
    }
  `,
  styles: `
    table {
      width: 100%;
    }

    td,
    th {
      white-space: nowrap;
    }

    tr.retired td:not(.state):not(.actions) {
      text-decoration: line-through;
      opacity: 0.7;
    }

    .state {
      white-space: normal;
      min-width: 12rem;
    }

    .retired-label,
    .in-force {
      font-weight: 500;
      margin-right: 0.5rem;
    }

    .change {
      display: block;
      font-size: 0.85em;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LabPanelHistory {
  private readonly api = inject(CaseApi);
  private readonly dialog = inject(MatDialog);

  readonly caseId = input.required<string>();
  readonly panels = input.required<readonly LabPanelView[]>();
  readonly canEdit = input(false);
  /** "Correct…" of a panel: the form below takes it, prefilled. */
  readonly correct = output<LabPanelView>();
  /** The case after a withdrawal. */
  readonly changed = output<CaseDetail>();

  protected readonly isBusy = signal(false);
  protected readonly errorText = signal('');
  protected readonly inForceId = computed(() => panelInForce(this.panels())?.id ?? null);
  protected readonly columns = computed(() =>
    this.canEdit() ? [...this.baseColumns, 'state', 'actions'] : [...this.baseColumns, 'state'],
  );

  private readonly baseColumns = [
    'takenAt',
    'bilirubin',
    'albumin',
    'inr',
    'creatinine',
    'sodium',
    'platelets',
    'ascites',
    'encephalopathy',
    'dialysis',
    'enteredBy',
  ];
  protected readonly unitLabels = unitLabels;

  /** Asks for the reason, naming the panel and what follows from it, then withdraws. */
  protected confirmWithdrawal(panel: LabPanelView): void {
    const taken = dayOf(panel.takenAt);
    const isInForce = panel.id === this.inForceId();
    const next = panelInForce(this.panels().filter((other) => other.id !== panel.id));
    const items = [
      `The panel taken ${taken}, entered by ${panel.enteredBy}: kept, marked withdrawn`,
    ];
    if (isInForce) {
      items.push(
        next
          ? `The scores are computed again from the panel taken ${dayOf(next.takenAt)}`
          : 'No panel is left in force: the lab-based scores are not given',
      );
    }
    const data: ConfirmDialogData = {
      title: `Withdraw the panel taken ${taken}?`,
      message: 'A withdrawn panel stays in the history with your reason; it no longer counts.',
      items,
      confirmLabel: 'Withdraw panel',
      reasonLabel: 'Reason for the withdrawal',
    };
    this.dialog
      .open<ConfirmDialog, ConfirmDialogData, ConfirmDialogResult>(ConfirmDialog, { data })
      .afterClosed()
      .subscribe((result) => {
        if (typeof result === 'string' && result) this.withdraw(panel, result);
      });
  }

  private withdraw(panel: LabPanelView, reason: string): void {
    this.isBusy.set(true);
    this.errorText.set('');
    this.api.withdrawLabPanel(this.caseId(), panel.id, reason).subscribe({
      next: (detail) => {
        this.isBusy.set(false);
        this.changed.emit(detail);
      },
      error: (error: unknown) => {
        this.isBusy.set(false);
        this.errorText.set(['The panel was not withdrawn.', problemMessage(error)].join(' '));
      },
    });
  }
  protected readonly ascitesLabels = ascitesLabels;
  protected readonly encephalopathyLabels = encephalopathyLabels;
}

/** "20 Nov 2026": the day of an ISO time, as the history shows it. */
function dayOf(iso: string): string {
  return new Date(iso).toLocaleDateString('en-GB', {
    day: 'numeric',
    month: 'short',
    year: 'numeric',
  });
}
