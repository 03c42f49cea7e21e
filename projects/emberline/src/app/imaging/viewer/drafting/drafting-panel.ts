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
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  ablationModalityLabels,
  halfVoxelDiagonalMm,
  planStatusLabels,
  vector3,
  type ApplicatorProfileView,
  type PlanView,
} from '@emberline/shared';
import { FieldError } from '../../../core/field-error';
import { problemMessage } from '../../../core/problem';
import { applyFieldErrors } from '../../../core/server-field-errors';
import { PlanApi } from '../../../plans/plan-api';
import { ViewerSession } from '../viewer-session';
import * as drafting from './drafting-state';
import { PathFiguresPanel } from './path-figures';

/**
 * The side panel of a plan being drafted (or shown): its name, its applicators (add, remove,
 * choose which one the clicks and the fields below apply to), each one's profile, power and
 * time within the profile's zone table, the notes, the live figures and Save.
 */
@Component({
  selector: 'em-drafting-panel',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatSuffix,
    MatInput,
    MatSelect,
    MatOption,
    MatButton,
    MatIconButton,
    MatIcon,
    FieldError,
    PathFiguresPanel,
  ],
  templateUrl: './drafting-panel.html',
  styleUrl: './drafting-panel.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class DraftingPanel {
  private readonly session = inject(ViewerSession);
  private readonly api = inject(PlanApi);

  readonly caseId = input.required<string>();
  readonly seriesId = input.required<string>();
  readonly profiles = input.required<readonly ApplicatorProfileView[]>();
  /** The saved plan on screen, if any (its name, notes and status). */
  readonly plan = input<PlanView | null>(null);
  readonly saved = output<PlanView>();
  readonly closed = output();

  protected readonly draft = this.session.draft;
  protected readonly isEditable = this.session.isDraftEditable;
  protected readonly statusLabels = planStatusLabels;
  protected readonly modalityLabels = ablationModalityLabels;
  protected readonly step = computed(() => {
    const draft = this.draft();
    return draft ? drafting.draftStep(draft) : null;
  });
  protected readonly canAdd = computed(() => {
    const draft = this.draft();
    return !!draft && this.isEditable() && drafting.canAddApplicator(draft);
  });
  protected readonly applicatorRows = computed(() =>
    (this.draft()?.applicators ?? []).map((applicator, index) => ({
      index,
      isSelected: index === this.draft()?.selected,
      lengthMm:
        applicator.entryLps && applicator.targetLps
          ? vector3.distance(applicator.entryLps, applicator.targetLps)
          : null,
      state: !applicator.targetLps
        ? 'target not placed'
        : !applicator.entryLps
          ? 'entry not placed'
          : null,
    })),
  );
  protected readonly selectedProfile = computed(() => {
    const draft = this.draft();
    const id = draft ? drafting.selectedApplicator(draft).profileId : null;
    return this.profiles().find((profile) => profile.id === id) ?? null;
  });
  protected readonly limits = computed(() => {
    const profile = this.selectedProfile();
    return profile ? drafting.profileLimits(profile) : null;
  });
  protected readonly figures = this.session.figures;
  protected readonly fieldKinds = this.session.fieldKinds;
  protected readonly readyKinds = this.session.readyKinds;
  protected readonly fieldsTotalMs = this.session.fieldsTotalMs;
  protected readonly clearanceProblem = this.session.clearanceProblem;
  protected readonly halfDiagonalMm = computed(() => {
    const volume = this.session.volume();
    return volume ? halfVoxelDiagonalMm(volume.geometry.spacingMm) : 0;
  });

  protected readonly isSaving = signal(false);
  protected readonly problems = signal<string[]>([]);
  protected readonly serverProblem = signal('');
  protected readonly serverFieldProblems = signal<string[]>([]);
  protected readonly savedText = signal('');

  protected readonly form = inject(FormBuilder).group({
    name: ['', [Validators.required, Validators.maxLength(80)]],
    notes: ['', Validators.maxLength(4000)],
  });
  protected readonly settings = inject(FormBuilder).group({
    profileId: [null as string | null, Validators.required],
    powerW: [null as number | null, Validators.required],
    timeS: [null as number | null, Validators.required],
  });

  constructor() {
    effect(() => this.showPlan(this.plan()));
    effect(() => this.showSelected());
    effect(() => {
      const isEditable = this.isEditable();
      untracked(() => {
        for (const group of [this.form, this.settings]) {
          if (isEditable) group.enable({ emitEvent: false });
          else group.disable({ emitEvent: false });
        }
      });
    });
    this.settings.valueChanges.pipe(takeUntilDestroyed()).subscribe(() => this.settingsChanged());
  }

  private showPlan(plan: PlanView | null): void {
    untracked(() => {
      this.form.reset({ name: plan?.name ?? '', notes: plan?.notes ?? '' });
      this.problems.set([]);
      this.serverProblem.set('');
      this.serverFieldProblems.set([]);
    });
  }

  /** The fields follow the selected applicator (only where they differ, to keep the caret). */
  private showSelected(): void {
    const draft = this.draft();
    const profiles = this.profiles();
    if (!draft) return;
    const { profileId, powerW, timeS } = drafting.selectedApplicator(draft);
    untracked(() => {
      const current = this.settings.getRawValue();
      if (current.profileId !== profileId || current.powerW !== powerW || current.timeS !== timeS) {
        this.settings.setValue({ profileId, powerW, timeS }, { emitEvent: false });
      }
      this.applyLimits(profiles.find((profile) => profile.id === profileId) ?? null);
    });
  }

  private applyLimits(profile: ApplicatorProfileView | null): void {
    const limits = profile ? drafting.profileLimits(profile) : null;
    const { powerW, timeS } = this.settings.controls;
    powerW.setValidators(
      limits
        ? [
            Validators.required,
            Validators.min(limits.powerW.min),
            Validators.max(limits.powerW.max),
          ]
        : Validators.required,
    );
    timeS.setValidators(
      limits
        ? [Validators.required, Validators.min(limits.timeS.min), Validators.max(limits.timeS.max)]
        : Validators.required,
    );
    powerW.updateValueAndValidity({ emitEvent: false });
    timeS.updateValueAndValidity({ emitEvent: false });
  }

  private settingsChanged(): void {
    const value = this.settings.getRawValue();
    const draft = this.draft();
    if (!draft || !this.isEditable()) return;
    const before = drafting.selectedApplicator(draft);
    if (value.profileId !== before.profileId) {
      // A new profile brings its own zone table: start from its first row.
      const profile = this.profiles().find((candidate) => candidate.id === value.profileId);
      if (profile) {
        this.session.updateDraft((state) =>
          drafting.setSettings(state, drafting.settingsForProfile(profile)),
        );
        return;
      }
    }
    this.session.updateDraft((state) =>
      drafting.setSettings(state, {
        profileId: value.profileId,
        powerW: value.powerW === null ? null : Number(value.powerW),
        timeS: value.timeS === null ? null : Number(value.timeS),
      }),
    );
  }

  protected select(index: number): void {
    this.session.updateDraft((state) => drafting.selectApplicator(state, index));
  }

  protected add(): void {
    this.session.updateDraft(drafting.addApplicator);
  }

  protected remove(index: number): void {
    this.session.updateDraft((state) => drafting.removeApplicator(state, index));
  }

  protected placeAgain(): void {
    this.session.updateDraft(drafting.clearPlacement);
  }

  protected save(): void {
    const draft = this.draft();
    if (!draft || !this.isEditable() || this.isSaving()) return;
    this.form.markAllAsTouched();
    this.settings.markAllAsTouched();
    const problems = drafting.draftProblems(draft, this.profiles());
    if (this.form.invalid) problems.unshift('Give the plan a name.');
    this.problems.set(problems);
    const applicators = drafting.placementsOf(draft, this.profiles());
    if (problems.length || !applicators) return;
    const { name, notes } = this.form.getRawValue();
    const trimmedNotes = (notes ?? '').trim();
    this.isSaving.set(true);
    this.serverProblem.set('');
    this.serverFieldProblems.set([]);
    const request = draft.planId
      ? this.api.update(draft.planId, {
          name: name ?? '',
          applicators,
          notes: trimmedNotes ? trimmedNotes : null,
        })
      : this.api.create(this.caseId(), {
          name: name ?? '',
          seriesId: this.seriesId(),
          applicators,
          ...(trimmedNotes ? { notes: trimmedNotes } : {}),
        });
    request.subscribe({
      next: (plan) => {
        this.isSaving.set(false);
        this.session.updateDraft((state) => ({ ...state, planId: plan.id }));
        this.savedText.set(`Saved at ${new Date().toLocaleTimeString()}.`);
        this.saved.emit(plan);
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.serverProblem.set(problemMessage(error));
        // Name and notes errors go onto their fields; the applicators' are listed by number.
        this.serverFieldProblems.set(applyFieldErrors(this.form, error).map(readableFieldProblem));
      },
    });
  }

  protected close(): void {
    this.closed.emit();
  }
}

/** "applicators.1.powerW: …" → "Applicator 2, power (W): …". */
export function readableFieldProblem(text: string): string {
  const names: Record<string, string> = {
    powerW: 'power (W)',
    timeS: 'time (s)',
    profileId: 'profile',
    entry: 'entry',
    target: 'target',
  };
  return text.replace(
    /^applicators\.(\d+)(?:\.(\w+))?[.\d]*:/,
    (_, index: string, field?: string) => {
      const who = `Applicator ${Number(index) + 1}`;
      return field ? `${who}, ${names[field] ?? field}:` : `${who}:`;
    },
  );
}
