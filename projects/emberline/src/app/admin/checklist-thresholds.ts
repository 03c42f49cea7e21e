import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatTableModule } from '@angular/material/table';
import type { ThresholdView } from '@emberline/shared';
import { ClinicalCaution } from '../core/clinical-caution';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { AdminApi } from './admin-api';
import { ThresholdDialog } from './threshold-dialog';

/**
 * The thresholds the pre-procedure checklist checks a case's record against (INR, platelets, the
 * age of the laboratory panel and of the imaging), each with the source of its value and who
 * changed it last. A change names its source; bookings checked afterwards use the new value.
 */
@Component({
  selector: 'em-checklist-thresholds',
  imports: [DatePipe, MatTableModule, TypedCellDef, MatButton, MatProgressBar, ClinicalCaution],
  template: `
    <div class="em-page-header">
      <h2 id="thresholds-title">Checklist thresholds</h2>
    </div>
    <p class="status" role="status">{{ statusText() }}</p>
    <section class="em-panel table-panel" aria-labelledby="thresholds-title">
      <div class="progress-slot">
        @if (thresholds.isLoading()) {
          <mat-progress-bar mode="indeterminate" aria-label="Loading the thresholds" />
        }
      </div>
      @if (loadError()) {
        <div class="load-error" role="alert">
          <p>The thresholds could not be loaded: {{ loadError() }}</p>
          <button mat-stroked-button type="button" (click)="thresholds.reload()">Try again</button>
        </div>
      } @else if (thresholds.hasValue() && !rows().length) {
        <p class="empty">No threshold is defined.</p>
      } @else if (rows().length) {
        <div class="em-table-scroll" tabindex="0" role="region" aria-label="Thresholds table">
          <table mat-table [dataSource]="rows()" aria-labelledby="thresholds-title">
            <ng-container matColumnDef="label">
              <th mat-header-cell *matHeaderCellDef>Threshold</th>
              <td mat-cell *emCellDef="let threshold of rows()">{{ threshold.label }}</td>
            </ng-container>
            <ng-container matColumnDef="value">
              <th mat-header-cell *matHeaderCellDef>Value</th>
              <td mat-cell *emCellDef="let threshold of rows()" class="value">
                {{ threshold.value }} {{ threshold.unit }}
              </td>
            </ng-container>
            <ng-container matColumnDef="source">
              <th mat-header-cell *matHeaderCellDef>Source</th>
              <td mat-cell *emCellDef="let threshold of rows()">{{ threshold.source }}</td>
            </ng-container>
            <ng-container matColumnDef="updated">
              <th mat-header-cell *matHeaderCellDef>Last change</th>
              <td mat-cell *emCellDef="let threshold of rows()">
                <time [attr.datetime]="threshold.updatedAt">{{
                  threshold.updatedAt | date: 'd MMM y, HH:mm'
                }}</time>
                <span class="by">{{
                  threshold.updatedBy?.displayName ?? 'Installed default'
                }}</span>
              </td>
            </ng-container>
            <ng-container matColumnDef="actions">
              <th mat-header-cell *matHeaderCellDef>
                <span class="cdk-visually-hidden">Actions</span>
              </th>
              <td mat-cell *emCellDef="let threshold of rows()">
                <button
                  mat-stroked-button
                  type="button"
                  [attr.aria-label]="'Edit ' + threshold.label"
                  (click)="edit(threshold)"
                >
                  Edit
                </button>
              </td>
            </ng-container>
            <tr mat-header-row *matHeaderRowDef="columns"></tr>
            <tr mat-row *matRowDef="let row; columns: columns"></tr>
          </table>
        </div>
      }
    </section>
    <aside class="em-panel" aria-labelledby="thresholds-about">
      <h3 id="thresholds-about">Where the values come from</h3>
      <p>
        The installed values are common practice for percutaneous liver procedures, each with the
        source it names. Set them to your local protocol's values, and name that protocol as the
        source.
      </p>
      <em-clinical-caution />
    </aside>
  `,
  styles: `
    :host {
      display: flex;
      flex-direction: column;
      gap: 16px;
    }

    .status {
      margin: 0;
    }

    .table-panel {
      padding: 0;
      gap: 0;
      overflow: hidden;
    }

    .progress-slot {
      height: 4px;
    }

    .empty,
    .load-error {
      padding: 12px 16px;
      margin: 0;
    }

    .load-error {
      background: var(--mat-sys-error-container);
      color: var(--mat-sys-on-error-container);
    }

    table {
      width: 100%;
      min-width: 720px;
    }

    .value {
      white-space: nowrap;
    }

    .by {
      display: block;
      font: var(--mat-sys-body-small);
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ChecklistThresholds {
  private readonly dialog = inject(MatDialog);

  protected readonly thresholds = inject(AdminApi).checklistThresholds();
  protected readonly columns = ['label', 'value', 'source', 'updated', 'actions'];
  protected readonly rows = computed(() =>
    this.thresholds.hasValue() ? this.thresholds.value() : [],
  );
  protected readonly loadError = computed(() =>
    this.thresholds.error() ? problemMessage(this.thresholds.error()) : '',
  );
  protected readonly statusText = signal('');

  protected edit(threshold: ThresholdView): void {
    this.dialog
      .open<ThresholdDialog, ThresholdView, ThresholdView>(ThresholdDialog, {
        data: threshold,
        width: '520px',
      })
      .afterClosed()
      .subscribe((saved) => {
        if (!saved) return;
        this.statusText.set(`${saved.label} is now ${String(saved.value)} ${saved.unit}.`);
        this.thresholds.reload();
      });
  }
}
