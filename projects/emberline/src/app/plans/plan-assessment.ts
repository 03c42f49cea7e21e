import { DatePipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  input,
  output,
  signal,
  untracked,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import { MatFormField, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatOption, MatSelect } from '@angular/material/select';
import type { AssessmentView, PlanView, RequestAssessment } from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { AssessmentProgress } from './assessment-progress';
import { EarlierInputsNotice } from './earlier-inputs-notice';
import { PlanAssessments, isFinished } from './plan-assessments';
import { SafetyProfileChoices } from './safety-profile-choices';
import { VerdictBadge } from './verdict-badge';

/**
 * One plan's assessment in its card of the Plans section: the newest assessment's state (its
 * verdict once done, its live progress while it runs) and, for the presenting physician of the
 * case, "Request assessment". Everyone else sees the results only (DEVELOPERS.md, "Roles").
 */
@Component({
  selector: 'em-plan-assessment',
  imports: [
    DatePipe,
    MatButton,
    MatCheckbox,
    MatFormField,
    MatIcon,
    MatLabel,
    MatOption,
    MatSelect,
    AssessmentProgress,
    EarlierInputsNotice,
    VerdictBadge,
  ],
  templateUrl: './plan-assessment.html',
  styleUrl: './plan-assessment.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class PlanAssessment {
  private readonly assessments = inject(PlanAssessments);

  readonly plan = input.required<PlanView>();
  /** Whether the signed-in user presents the case (the server refuses anyone else). */
  readonly canRequest = input(false);
  /** An assessment of this plan finished (the plan's state changed on the server too). */
  readonly settled = output<AssessmentView>();

  protected readonly state = computed(() => this.assessments.stateOf(this.plan().id));
  protected readonly latest = computed(() => this.state().latest);
  protected readonly isRunning = computed(() => {
    const latest = this.latest();
    return latest !== null && !isFinished(latest);
  });
  /** What changed since the newest finished assessment ran; empty when nothing did. */
  protected readonly inputChanges = computed(() => {
    const latest = this.latest();
    return latest && isFinished(latest) ? (latest.inputChanges ?? []) : [];
  });
  /** The board's choice is final: a selected or set-aside plan is not assessed again. */
  protected readonly isClosed = computed(() =>
    ['selected', 'set-aside'].includes(this.plan().status),
  );
  /**
   * The safety profiles the presenter may judge the plan by (the default first); the choice
   * shows only when there is more than one.
   */
  private readonly choices = inject(SafetyProfileChoices);
  protected readonly profileChoices = this.choices.profiles;
  /** The profile chosen; null: the default one. */
  protected readonly chosenProfileId = signal<string | null>(null);
  /**
   * Whether the request rehearses the insertion (the server's default). Switching it off saves
   * the time the simulation takes, for a quick look at the zones and the path.
   */
  protected readonly rehearse = signal(true);
  protected readonly isRequesting = signal(false);
  protected readonly requestError = signal('');
  protected readonly requestNote = signal('');

  constructor() {
    effect(() => {
      const id = this.plan().id;
      untracked(() => this.assessments.load([id]));
    });
    // Only the presenter, who may request, is offered a choice of safety profile.
    effect(() => {
      if (this.canRequest() && !this.isClosed()) untracked(() => this.choices.load());
    });
  }

  protected request(): void {
    const before = this.latest();
    this.isRequesting.set(true);
    this.requestError.set('');
    this.requestNote.set('');
    const chosen = this.chosenProfileId();
    // Only what differs from the server's defaults is sent: the default profile, rehearsal on.
    const body: RequestAssessment = {
      ...(chosen ? { safetyProfileId: chosen } : {}),
      ...(this.rehearse() ? {} : { rehearsal: false }),
    };
    this.assessments.request(this.plan().id, body).subscribe({
      next: (view) => {
        this.isRequesting.set(false);
        if (view.status === 'done' && view.id === before?.id) {
          this.requestNote.set(
            'The plan has not changed since its last assessment: that result stands.',
          );
        }
      },
      error: (error: unknown) => {
        this.isRequesting.set(false);
        this.requestError.set(`The assessment was not requested. ${problemMessage(error)}`);
      },
    });
  }

  protected keep(view: AssessmentView): void {
    this.assessments.replace(view);
    this.settled.emit(view);
  }

  protected retry(): void {
    this.assessments.load([this.plan().id]);
  }
}
