import { CdkAccordion, CdkAccordionItem } from '@angular/cdk/accordion';
import { DOCUMENT, DatePipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  input,
  signal,
  untracked,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { planStatusLabels, type AssessmentView, type PlanView } from '@emberline/shared';
import { ClinicalCaution } from '../core/clinical-caution';
import { StructureApi } from '../imaging/structure-api';
import { AssessmentProgress } from './assessment-progress';
import { inputsGroup } from './comparison-input-rows';
import { rehearsalGroup } from './comparison-rehearsal-rows';
import { comparisonGroups, type ComparedPlan } from './comparison-rows';
import { PlanAssessments, type PlanAssessmentState } from './plan-assessments';
import { RehearsalCaution } from './rehearsal-caution';
import { RehearsalCell } from './rehearsal-cell';
import { ComparisonSummaryBand } from './summary/comparison-summary-band';
import { VerdictBadge } from './verdict-badge';

/** A plan that has no column, and why. */
interface PendingPlan {
  plan: PlanView;
  state: PlanAssessmentState;
  /** The run under way, shown with its progress. */
  running: AssessmentView | null;
  reason: string;
}

/**
 * The plan comparison of the Plans section: every plan whose newest assessment is done. It opens
 * with a summary band (a line a plan: verdict, the figures it rests on, a picture of the slice
 * through the needle), then the full table — a column a plan, a row a figure with its unit, the
 * better value of a ranked row marked by a sign and in words, the verdict with its reasons, the
 * inputs each assessment ran on — in groups that fold away (all unfolded on paper). Plans not
 * (yet) compared are listed below with the reason and, while one runs, its progress.
 */
@Component({
  selector: 'em-plan-comparison',
  imports: [
    CdkAccordion,
    CdkAccordionItem,
    DatePipe,
    MatButton,
    MatIcon,
    AssessmentProgress,
    ClinicalCaution,
    ComparisonSummaryBand,
    RehearsalCaution,
    RehearsalCell,
    VerdictBadge,
  ],
  // The page prints the comparison alone when it shows (styles.scss, "Printing one part").
  host: { class: 'em-print-focus' },
  templateUrl: './plan-comparison.html',
  styleUrl: './plan-comparison.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class PlanComparison {
  private readonly assessments = inject(PlanAssessments);
  private readonly document = inject(DOCUMENT);

  readonly plans = input.required<readonly PlanView[]>();
  /** The case's code, for the printed page's heading. */
  readonly caseCode = input('');

  protected readonly statusLabels = planStatusLabels;
  protected readonly columns = computed<ComparedPlan[]>(() =>
    this.plans().flatMap((plan) => {
      const latest = this.assessments.stateOf(plan.id).latest;
      return latest?.status === 'done' && latest.result
        ? [{ plan, assessment: latest, result: latest.result }]
        : [];
    }),
  );
  protected readonly pending = computed<PendingPlan[]>(() => {
    const compared = new Set(this.columns().map((column) => column.plan.id));
    return this.plans()
      .filter((plan) => !compared.has(plan.id))
      .map((plan) => pendingPlan(plan, this.assessments.stateOf(plan.id)));
  });

  /** Tumour names come from the structures of the series, when every column shares one. */
  private readonly seriesId = computed(() => {
    const ids = new Set(this.columns().map((column) => column.plan.seriesId));
    return ids.size === 1 ? [...ids][0] : undefined;
  });
  private readonly structures = inject(StructureApi).list(this.seriesId);
  protected readonly tumourNames = computed(
    () =>
      new Map(
        (this.structures.hasValue() ? this.structures.value() : []).map((structure) => [
          structure.id,
          structure.name,
        ]),
      ),
  );
  protected readonly groups = computed(() => [
    ...comparisonGroups(this.columns(), this.tumourNames()),
    rehearsalGroup(this.columns()),
    inputsGroup(this.columns()),
  ]);
  protected readonly printedAt = signal(new Date());

  constructor() {
    let isFirstRead = true;
    effect(() => {
      const ids = this.plans().map((plan) => plan.id);
      untracked(() => {
        // Opening the comparison reads every plan afresh; later plan lists only add the new ones.
        this.assessments.load(ids, { refresh: isFirstRead });
        isFirstRead = false;
      });
    });
  }

  protected print(): void {
    this.printedAt.set(new Date());
    this.document.defaultView?.print();
  }

  protected keep(view: AssessmentView): void {
    this.assessments.replace(view);
  }

  protected retry(plan: PlanView): void {
    this.assessments.load([plan.id]);
  }
}

function pendingPlan(plan: PlanView, state: PlanAssessmentState): PendingPlan {
  const latest = state.latest;
  const entry = (reason: string, running: AssessmentView | null = null): PendingPlan => ({
    plan,
    state,
    running,
    reason,
  });
  if (state.error) return entry(`Its assessments could not be read. ${state.error}`);
  if (!latest) return entry(state.isLoading ? 'Reading its assessments…' : 'Not assessed yet.');
  switch (latest.status) {
    case 'queued':
    case 'running':
      return entry('Being assessed; it joins the comparison when the run is done.', latest);
    case 'failed':
      return entry(`The assessment failed. ${latest.error ?? 'The server gave no reason.'}`);
    case 'done':
      return entry('The assessment is done but carries no figures.');
  }
}
