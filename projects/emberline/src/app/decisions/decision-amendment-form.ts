import { DOCUMENT } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  inject,
  input,
  output,
  signal,
  type OnInit,
} from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { amendDecisionSchema, type AmendDecision, type DecisionView } from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { zodValidator } from '../core/zod-validator';
import { DecisionApi } from './decision-api';
import { keepSigningDraft, takeSigningDraft } from './signing-draft';
import { passesSchema, signingRefusal } from './signing-refusal';
import { SigningNotice } from './signing-notice';
import { textRequired } from './text-required';

const fields = amendDecisionSchema.shape;

/**
 * Adds a signed amendment to a decision (a proceduralist of the case's board): the reason and
 * the text, signed like the decision. The decision itself never changes.
 */
@Component({
  selector: 'em-decision-amendment-form',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatInput,
    MatButton,
    FieldError,
    SigningNotice,
  ],
  template: `
    <form [formGroup]="form" (ngSubmit)="save()" aria-labelledby="amendment-form-title">
      <h3 id="amendment-form-title">Add amendment</h3>
      <p class="em-note">
        An amendment is added after the decision, signed and kept in order; nothing already signed
        is changed.
      </p>
      <mat-form-field>
        <mat-label>Reason</mat-label>
        <textarea
          matInput
          id="amendment-reason"
          formControlName="reason"
          rows="2"
          required
        ></textarea>
        <mat-hint>Why the decision needs amending</mat-hint>
        @if (form.controls.reason.invalid) {
          <mat-error>{{ form.controls.reason.errors | fieldError }}</mat-error>
        }
      </mat-form-field>
      <mat-form-field>
        <mat-label>Amendment</mat-label>
        <textarea matInput id="amendment-text" formControlName="text" rows="4" required></textarea>
        @if (form.controls.text.invalid) {
          <mat-error>{{ form.controls.text.errors | fieldError }}</mat-error>
        }
      </mat-form-field>
      @if (isLocal()) {
        <mat-form-field>
          <mat-label>Your password</mat-label>
          <input
            matInput
            id="amendment-password"
            type="password"
            formControlName="password"
            autocomplete="current-password"
          />
          <mat-hint>Typed again to sign the amendment</mat-hint>
          @if (form.controls.password.invalid) {
            <mat-error>{{ form.controls.password.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
      } @else {
        <p class="em-note">
          You signed in through the hospital's single sign-on: signing needs a sign-on within the
          last five minutes.
        </p>
      }
      <em-signing-notice
        [message]="errorText()"
        [needsFreshSso]="needsFreshSso()"
        (signOnAgain)="signOnAgain()"
      />
      <div class="em-actions">
        <button mat-flat-button type="submit" [disabled]="isSaving()">Sign the amendment</button>
      </div>
    </form>
  `,
  styleUrl: './decision-forms.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class DecisionAmendmentForm implements OnInit {
  private readonly api = inject(DecisionApi);
  private readonly document = inject(DOCUMENT);

  readonly caseId = input.required<string>();
  readonly signInMethod = input.required<'local' | 'saml'>();
  /** The decision with the new amendment at its end. */
  readonly amended = output<DecisionView>();

  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly needsFreshSso = signal(false);
  protected readonly isLocal = computed(() => this.signInMethod() === 'local');

  protected readonly form = inject(FormBuilder).nonNullable.group({
    reason: ['', [textRequired, zodValidator(fields.reason)]],
    text: ['', [textRequired, zodValidator(fields.text)]],
    password: ['', [Validators.required, zodValidator(fields.password)]],
  });

  private draftKey(): string {
    return `emberline:amendment-draft:${this.caseId()}`;
  }

  ngOnInit(): void {
    this.start();
  }

  private start(): void {
    if (!this.isLocal()) this.form.controls.password.disable();
    const draft = takeSigningDraft(this.draftKey());
    if (draft) this.form.patchValue({ reason: draft['reason'] ?? '', text: draft['text'] ?? '' });
  }

  protected save(): void {
    this.errorText.set('');
    this.needsFreshSso.set(false);
    const body = this.body();
    if (this.form.invalid || !passesSchema(this.form, amendDecisionSchema, body)) {
      this.form.markAllAsTouched();
      return;
    }
    this.isSaving.set(true);
    this.api.amend(this.caseId(), body).subscribe({
      next: (decision) => {
        this.isSaving.set(false);
        this.form.reset();
        this.amended.emit(decision);
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        const refusal = signingRefusal(this.form, error);
        this.errorText.set(refusal.message);
        this.needsFreshSso.set(refusal.needsFreshSso);
      },
    });
  }

  /** Keeps the reason and the text (never the password), then leaves for the identity provider. */
  protected signOnAgain(): void {
    const value = this.form.getRawValue();
    keepSigningDraft(this.draftKey(), { reason: value.reason, text: value.text });
    this.document.location.assign('/api/auth/saml/login');
  }

  private body(): AmendDecision {
    const value = this.form.getRawValue();
    const body: AmendDecision = { reason: value.reason.trim(), text: value.text.trim() };
    if (this.isLocal()) body.password = value.password;
    return body;
  }
}
