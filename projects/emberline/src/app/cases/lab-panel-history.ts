import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, input } from '@angular/core';
import { MatTableModule } from '@angular/material/table';
import type { LabPanelView } from '@emberline/shared';
import { ascitesLabels, encephalopathyLabels, unitLabels } from './clinical-labels';
import { TypedCellDef } from '../core/typed-cell-def';

/** The laboratory panels of a case, newest first, as they were entered. */
@Component({
  selector: 'em-lab-panel-history',
  imports: [DatePipe, MatTableModule, TypedCellDef],
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
          <tr mat-header-row *matHeaderRowDef="columns"></tr>
          <tr mat-row *matRowDef="let row; columns: columns"></tr>
        </table>
      </div>
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
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LabPanelHistory {
  readonly panels = input.required<readonly LabPanelView[]>();

  protected readonly columns = [
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
  protected readonly ascitesLabels = ascitesLabels;
  protected readonly encephalopathyLabels = encephalopathyLabels;
}
