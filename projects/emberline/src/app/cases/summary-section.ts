import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { panelInForce, type CaseDetail, type LabPanelView } from '@emberline/shared';
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
  /** The date of the panel the scores come from: the one in force (shared `panelInForce`). */
  protected readonly inForceTakenAt = computed(
    () => panelInForce(this.detail()?.labPanels ?? [])?.takenAt ?? null,
  );
  /** The panel the lab form corrects, or null while it adds a new one. */
  protected readonly correcting = signal<LabPanelView | null>(null);

  protected replace(detail: CaseDetail): void {
    this.state.replace(detail);
  }

  protected corrected(detail: CaseDetail): void {
    this.correcting.set(null);
    this.replace(detail);
  }
}
