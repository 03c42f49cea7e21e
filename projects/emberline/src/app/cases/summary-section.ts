import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import type { CaseDetail } from '@emberline/shared';
import { CaseDetailsForm } from './case-details-form';
import { CaseFileState } from './case-file-state';
import { LabPanelForm } from './lab-panel-form';
import { LabPanelHistory } from './lab-panel-history';
import { LesionList } from './lesion-list';
import { LiverScoresCard } from './liver-scores-card';

/** Summary of the case file: the case's fields, lesions, laboratory values and the scores. */
@Component({
  selector: 'em-summary-section',
  imports: [CaseDetailsForm, LesionList, LabPanelForm, LabPanelHistory, LiverScoresCard],
  templateUrl: './summary-section.html',
  styleUrl: './summary-section.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SummarySection {
  private readonly state = inject(CaseFileState);

  protected readonly detail = this.state.detail;
  protected readonly latestPanelTakenAt = computed(
    () => this.detail()?.labPanels[0]?.takenAt ?? null,
  );

  protected replace(detail: CaseDetail): void {
    this.state.replace(detail);
  }
}
