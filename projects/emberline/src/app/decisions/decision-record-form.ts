import { DOCUMENT } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  computed,
  inject,
  input,
  output,
  signal,
  type OnInit,
} from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import type { Observable } from 'rxjs';
import {
  ablationTreatments,
  bookingUrgencies,
  bookingUrgencyLabels,
  recordDecisionSchema,
  treatmentLabels,
  treatments,
  type DecisionView,
  type BookingUrgency,
  type RecordDecision,
  type Treatment,
} from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { zodValidator } from '../core/zod-validator';
import { DecisionApi } from './decision-api';
import { keepSigningDraft, takeSigningDraft } from './signing-draft';
import { passesSchema, signingRefusal } from './signing-refusal';
import { SigningNotice } from './signing-notice';
import { textRequired } from './text-required';

const fields = recordDecisionSchema.shape;

/**
 * Records and signs the board's decision on a case on the agenda (a proceduralist of its board):
 * the outcome among the treatments, the assessed plan for an ablation, the rationale and any
 * conditions, signed with the password typed again (a local account) or a recent hospital
 * sign-on. Without quorum only the meeting's chair records, with a reason kept beside the
 * decision; the server decides who the chair is.
 */
@Component({
  selector: 'em-decision-record-form',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatInput,
    MatSelect,
    MatOption,
    MatButton,
    FieldError,
    SigningNotice,
  ],
  templateUrl: './decision-record-form.html',
  styleUrl: './decision-forms.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class DecisionRecordForm implements OnInit {
  private readonly api = inject(DecisionApi);
  private readonly document = inject(DOCUMENT);
  private readonly destroyRef = inject(DestroyRef);

  readonly caseId = input.required<string>();
  /** The case's assessed plans: what an ablation may select. */
  readonly plans = input.required<readonly { id: string; name: string }[]>();
  /** How the signer signed in: a local account types its password again. */
  readonly signInMethod = input.required<'local' | 'saml'>();
  /**
   * How the decision is sent: over the API by default; the board session passes its socket
   * (`decision:record`), so that the signer stays in the room and counts for quorum. A refusal
   * arrives as an HttpErrorResponse carrying the problem either way.
   */
  readonly send = input<
    ((caseId: string, body: RecordDecision) => Observable<DecisionView>) | null
  >(null);
  readonly recorded = output<DecisionView>();
  /** The case changed meanwhile (decided elsewhere, or off the agenda): read it again. */
  readonly stale = output();

  protected readonly outcomes = treatments;
  protected readonly outcomeLabels = treatmentLabels;
  protected readonly urgencies = bookingUrgencies;
  protected readonly urgencyLabels = bookingUrgencyLabels;
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly needsFreshSso = signal(false);
  protected readonly isLocal = computed(() => this.signInMethod() === 'local');

  protected readonly form = inject(FormBuilder).nonNullable.group({
    outcome: ['' as Treatment | '', Validators.required],
    planId: [{ value: '', disabled: true }, Validators.required],
    rationale: ['', [textRequired, zodValidator(fields.rationale)]],
    conditions: ['', zodValidator(fields.conditions)],
    urgency: ['routine' as BookingUrgency, Validators.required],
    password: ['', [Validators.required, zodValidator(fields.password)]],
    quorumOverrideReason: ['', zodValidator(fields.quorumOverrideReason)],
  });
  private readonly outcome = signal<Treatment | ''>('');
  protected readonly isAblation = computed(() => isAblation(this.outcome()));

  private draftKey(): string {
    return `emberline:decision-draft:${this.caseId()}`;
  }

  ngOnInit(): void {
    this.start();
  }

  private start(): void {
    if (!this.isLocal()) this.form.controls.password.disable();
    this.form.controls.outcome.valueChanges
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe((outcome) => this.outcomeChosen(outcome));
    const draft = takeSigningDraft(this.draftKey());
    if (draft) {
      this.form.patchValue({
        outcome: (treatments as readonly string[]).includes(draft['outcome'] ?? '')
          ? (draft['outcome'] as Treatment)
          : '',
        rationale: draft['rationale'] ?? '',
        conditions: draft['conditions'] ?? '',
        urgency: (bookingUrgencies as readonly string[]).includes(draft['urgency'] ?? '')
          ? (draft['urgency'] as BookingUrgency)
          : 'routine',
        quorumOverrideReason: draft['quorumOverrideReason'] ?? '',
      });
      this.form.controls.planId.setValue(draft['planId'] ?? '');
    }
  }

  /** A plan is chosen only for an ablation: the field comes and goes with the outcome. */
  private outcomeChosen(outcome: Treatment | ''): void {
    this.outcome.set(outcome);
    const plan = this.form.controls.planId;
    if (isAblation(outcome)) {
      plan.enable();
    } else {
      plan.reset('');
      plan.disable();
    }
  }

  protected save(): void {
    this.errorText.set('');
    this.needsFreshSso.set(false);
    const body = this.body();
    if (this.form.invalid || !passesSchema(this.form, recordDecisionSchema, body)) {
      this.form.markAllAsTouched();
      return;
    }
    this.isSaving.set(true);
    const send = this.send() ?? ((caseId, request) => this.api.record(caseId, request));
    send(this.caseId(), body).subscribe({
      next: (decision) => {
        this.isSaving.set(false);
        this.form.reset();
        this.recorded.emit(decision);
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        const refusal = signingRefusal(this.form, error);
        this.errorText.set(refusal.message);
        this.needsFreshSso.set(refusal.needsFreshSso);
        if (refusal.isStale) this.stale.emit();
      },
    });
  }

  /** Keeps what was typed (never the password), then leaves for the identity provider. */
  protected signOnAgain(): void {
    const value = this.form.getRawValue();
    keepSigningDraft(this.draftKey(), {
      outcome: value.outcome,
      planId: value.planId,
      rationale: value.rationale,
      conditions: value.conditions,
      urgency: value.urgency,
      quorumOverrideReason: value.quorumOverrideReason,
    });
    this.document.location.assign('/api/auth/saml/login');
  }

  /** The request as the shared schema reads it: empty optional fields left out. */
  private body(): RecordDecision {
    const value = this.form.getRawValue();
    const body: Record<string, unknown> = {
      outcome: value.outcome,
      rationale: value.rationale.trim(),
    };
    if (this.isAblation() && value.planId) body['planId'] = value.planId;
    if (value.conditions.trim()) body['conditions'] = value.conditions.trim();
    body['urgency'] = value.urgency;
    if (this.isLocal()) body['password'] = value.password;
    if (value.quorumOverrideReason.trim()) {
      body['quorumOverrideReason'] = value.quorumOverrideReason.trim();
    }
    return body as RecordDecision;
  }
}

function isAblation(outcome: Treatment | ''): boolean {
  return outcome !== '' && ablationTreatments.includes(outcome);
}
