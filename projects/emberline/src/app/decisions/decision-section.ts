import { HttpErrorResponse } from '@angular/common/http';
import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatProgressBar } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import {
  bookingUrgencyLabels,
  caseStatusLabels,
  treatmentLabels,
  type DecisionView,
  type PlanView,
} from '@emberline/shared';
import { CaseFileState } from '../cases/case-file-state';
import { AuthSession } from '../core/auth-session';
import { ClinicalCaution } from '../core/clinical-caution';
import { problemMessage } from '../core/problem';
import { PlanApi } from '../plans/plan-api';
import { DecisionAmendmentForm } from './decision-amendment-form';
import { DecisionApi } from './decision-api';
import { DecisionRecordForm } from './decision-record-form';

/** How the signer confirmed the signature, in words. */
const signInMethodLabels: Record<DecisionView['signInMethod'], string> = {
  local: 'Password typed again at signing',
  saml: 'Hospital single sign-on, renewed within five minutes of signing',
};

/**
 * The case file's Decision section: the board's signed decision and its amendments in order,
 * or "No decision recorded yet". A proceduralist of the case's board records the decision while
 * the case is on an agenda, and amends it afterwards; everyone else reads. A signed decision
 * freezes the case: the case file is read again, and its edit buttons go.
 */
@Component({
  selector: 'em-decision-section',
  imports: [
    DatePipe,
    RouterLink,
    MatButton,
    MatProgressBar,
    ClinicalCaution,
    DecisionRecordForm,
    DecisionAmendmentForm,
  ],
  templateUrl: './decision-section.html',
  styleUrl: './decision-section.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class DecisionSection {
  private readonly state = inject(CaseFileState);
  private readonly session = inject(AuthSession);

  protected readonly outcomeLabels = treatmentLabels;
  protected readonly urgencyLabels = bookingUrgencyLabels;
  protected readonly methodLabels = signInMethodLabels;
  protected readonly caseId = this.state.caseId;
  protected readonly detail = this.state.detail;
  protected readonly resource = inject(DecisionApi).decision(this.state.caseId);

  protected readonly decision = computed<DecisionView | null>(() =>
    this.resource.hasValue() ? this.resource.value() : null,
  );
  /** The read answered 404: the case has no decision. */
  protected readonly isUndecided = computed(() => {
    const error = this.resource.error();
    return error instanceof HttpErrorResponse && error.status === 404;
  });
  protected readonly loadError = computed(() => {
    const error = this.resource.error();
    return error && !this.isUndecided() ? problemMessage(error) : '';
  });

  /** A proceduralist who belongs to the case's board (the server checks it again). */
  protected readonly isSigner = computed(() => {
    const user = this.session.user();
    const detail = this.detail();
    if (!user || !detail) return false;
    return (
      user.roles.includes('proceduralist') &&
      user.boards.some((membership) => membership.boardId === detail.board.id)
    );
  });
  protected readonly signInMethod = computed(() => this.session.user()?.signInMethod ?? 'local');
  protected readonly mayRecord = computed(
    () => this.isSigner() && this.isUndecided() && this.detail()?.status === 'on-agenda',
  );
  protected readonly statusText = computed(() => {
    const status = this.detail()?.status;
    return status ? caseStatusLabels[status].toLowerCase() : '';
  });

  /** The plans only matter to someone about to record: asked for then only. */
  private readonly planResource = inject(PlanApi).list(() =>
    this.mayRecord() ? this.caseId() : undefined,
  );
  protected readonly assessedPlans = computed<PlanView[]>(() =>
    this.planResource.hasValue()
      ? this.planResource.value().filter((plan) => plan.status === 'assessed')
      : [],
  );

  protected recorded(decision: DecisionView): void {
    this.resource.set(decision);
    // The case is decided now: its status and permissions (read-only) come with a fresh read.
    this.state.resource.reload();
  }

  protected amended(decision: DecisionView): void {
    this.resource.set(decision);
  }

  /** Decided elsewhere meanwhile, or off the agenda: show what holds now. */
  protected reread(): void {
    this.resource.reload();
    this.state.resource.reload();
  }
}
