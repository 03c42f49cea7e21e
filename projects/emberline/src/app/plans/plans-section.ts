import { DatePipe, DecimalPipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  ElementRef,
  Injector,
  afterNextRender,
  computed,
  inject,
  signal,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { planStatusLabels, vector3, type PlanStatus, type PlanView } from '@emberline/shared';
import { CaseFileState } from '../cases/case-file-state';
import { ConfirmDialog, type ConfirmDialogData } from '../core/confirm-dialog';
import { problemMessage } from '../core/problem';
import { PlanApi } from './plan-api';
import { PlanAssessment } from './plan-assessment';
import { PlanAssessments } from './plan-assessments';
import { PlanComparison } from './plan-comparison';
import { RehearsalSettingsPanel } from './rehearsal-settings/rehearsal-settings-panel';
import { SafetyProfileChoices } from './safety-profile-choices';

/** Plans the presenter may copy as a new draft: those no longer open to edits. */
const copiedStatuses: readonly PlanStatus[] = ['submitted', 'assessed', 'assessment-failed'];
/** Plans the presenter may delete (the server's rule: a failed assessment leaves a draft). */
const deletableStatuses: readonly PlanStatus[] = ['draft', 'assessment-failed'];

/**
 * Plans of the case file: the needle plans drafted in the viewer, each with its state and its
 * applicators, a link that opens it in the viewer, the deletion of drafts, and "Copy as new
 * draft" for a plan submitted or assessed, so that it can be revised while the plan its
 * assessment belongs to stays as it was.
 */
@Component({
  selector: 'em-plans-section',
  imports: [
    DatePipe,
    DecimalPipe,
    RouterLink,
    MatButton,
    MatIcon,
    MatProgressBar,
    PlanAssessment,
    PlanComparison,
    RehearsalSettingsPanel,
  ],
  templateUrl: './plans-section.html',
  styleUrl: './plans-section.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class PlansSection {
  private readonly state = inject(CaseFileState);
  private readonly api = inject(PlanApi);
  private readonly dialog = inject(MatDialog);
  private readonly assessments = inject(PlanAssessments);
  private readonly host = inject<ElementRef<HTMLElement>>(ElementRef);
  private readonly injector = inject(Injector);

  protected readonly caseId = this.state.caseId;
  protected readonly caseCode = computed(() => this.state.detail()?.caseCode ?? '');
  protected readonly canEdit = computed(() => this.state.detail()?.permissions.canEdit ?? false);
  protected readonly statusLabels = planStatusLabels;
  protected readonly resource = this.api.list(this.state.caseId);
  protected readonly plans = computed<PlanView[]>(() =>
    this.resource.hasValue() ? this.resource.value() : [],
  );
  protected readonly loadError = computed(() => {
    const error = this.resource.error();
    return error ? problemMessage(error) : '';
  });
  protected readonly deletingIds = signal<ReadonlySet<string>>(new Set());
  protected readonly deleteError = signal('');
  protected readonly copyingIds = signal<ReadonlySet<string>>(new Set());
  /** The draft just made by a copy: highlighted, and its card focused. */
  protected readonly newDraftId = signal<string | null>(null);
  protected readonly copyNote = signal('');
  protected readonly copyError = signal('');

  constructor() {
    // Opening the section reads the safety profiles afresh when a card next asks for them.
    inject(SafetyProfileChoices).forget();
  }

  /** Entry-to-target length of an applicator, millimetres. */
  protected lengthMm(applicator: PlanView['applicators'][number]): number {
    return vector3.distance(applicator.entry, applicator.target);
  }

  /** Whether the plan's newest assessment is done: the viewer then draws its zones. */
  protected isAssessed(plan: PlanView): boolean {
    return this.assessments.stateOf(plan.id).latest?.status === 'done';
  }

  protected canDelete(plan: PlanView): boolean {
    return this.canEdit() && deletableStatuses.includes(plan.status);
  }

  protected canCopy(plan: PlanView): boolean {
    return this.canEdit() && copiedStatuses.includes(plan.status);
  }

  protected copy(plan: PlanView): void {
    this.copyError.set('');
    this.copyNote.set('');
    this.copyingIds.update((ids) => new Set(ids).add(plan.id));
    const settle = () =>
      this.copyingIds.update((ids) => {
        const rest = new Set(ids);
        rest.delete(plan.id);
        return rest;
      });
    this.api.copy(plan.id).subscribe({
      next: (draft) => {
        settle();
        // The server lists plans oldest first: the new draft goes last.
        this.resource.update((list) => [...(list ?? []), draft]);
        this.newDraftId.set(draft.id);
        this.copyNote.set(
          `${plan.name} was copied as the new draft ${draft.name}. Edit it in the viewer, ` +
            'then request its assessment.',
        );
        afterNextRender({ write: () => this.showNewDraft(draft.id) }, { injector: this.injector });
      },
      error: (error: unknown) => {
        settle();
        this.copyError.set(`The plan ${plan.name} was not copied. ${problemMessage(error)}`);
      },
    });
  }

  /** Brings the new draft's card into view and moves the focus to its heading. */
  private showNewDraft(planId: string): void {
    const card = this.host.nativeElement.querySelector<HTMLElement>(
      `[data-plan="${CSS.escape(planId)}"]`,
    );
    card?.scrollIntoView?.({ block: 'center' });
    card?.querySelector<HTMLElement>('h3')?.focus();
  }

  protected confirmDelete(plan: PlanView): void {
    const data: ConfirmDialogData = {
      title: `Delete the plan ${plan.name}?`,
      message: 'The draft and its applicators are deleted. This cannot be undone.',
      confirmLabel: 'Delete draft',
    };
    this.dialog
      .open<ConfirmDialog, ConfirmDialogData, boolean>(ConfirmDialog, { data })
      .afterClosed()
      .subscribe((isConfirmed) => {
        if (isConfirmed) this.delete(plan);
      });
  }

  private delete(plan: PlanView): void {
    this.deleteError.set('');
    this.deletingIds.update((ids) => new Set(ids).add(plan.id));
    const settle = () =>
      this.deletingIds.update((ids) => {
        const rest = new Set(ids);
        rest.delete(plan.id);
        return rest;
      });
    this.api.remove(plan.id).subscribe({
      next: () => {
        settle();
        this.resource.update((list) => list?.filter((candidate) => candidate.id !== plan.id));
      },
      error: (error: unknown) => {
        settle();
        this.deleteError.set(`The plan ${plan.name} was not deleted. ${problemMessage(error)}`);
      },
    });
  }
}
