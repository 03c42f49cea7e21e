import { DOCUMENT } from '@angular/common';
import { httpResource } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatProgressBar } from '@angular/material/progress-bar';
import { Router } from '@angular/router';
import {
  loginRequestSchema,
  totpConfirmSchema,
  type CurrentUser,
  type LoginRequest,
} from '@emberline/shared';
import { homeOf } from '../core/access-guards';
import { AuthSession } from '../core/auth-session';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { handledByCaller } from '../core/http-context-tokens';
import { TOTP_REQUIRED_PROBLEM, problemMessage, problemOf } from '../core/problem';
import { zodValidator } from '../core/zod-validator';

type Step = 'credentials' | 'code';

/** Local sign-in (e-mail and password, then a six-digit code when the account has one) and SSO. */
@Component({
  selector: 'em-sign-in',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatInput,
    MatError,
    MatHint,
    MatButton,
    MatProgressBar,
    FieldError,
  ],
  templateUrl: './sign-in.html',
  styleUrl: './sign-in.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SignIn {
  private readonly session = inject(AuthSession);
  private readonly router = inject(Router);
  private readonly document = inject(DOCUMENT);

  /** `?sso=refused` when the hospital identity provider's answer was not accepted. */
  readonly sso = input<string>();
  /** Where to go after signing in (set by the guard that sent the user here). */
  readonly returnUrl = input<string>();

  protected readonly credentials = inject(NonNullableFormBuilder).group({
    email: ['', [Validators.required, zodValidator(loginRequestSchema.shape.email)]],
    password: ['', Validators.required],
  });
  protected readonly codeForm = inject(NonNullableFormBuilder).group({
    code: ['', [Validators.required, zodValidator(totpConfirmSchema.shape.code)]],
  });

  protected readonly step = signal<Step>('credentials');
  protected readonly isPending = signal(false);
  protected readonly errorText = signal('');
  protected readonly codePrompt = signal('Enter the six-digit code from your authenticator app.');

  private readonly samlStatus = httpResource<{ enabled: boolean }>(() => ({
    url: '/api/auth/saml/status',
    context: handledByCaller(),
  }));
  protected readonly isSsoEnabled = computed(
    () => this.samlStatus.hasValue() && this.samlStatus.value().enabled === true,
  );
  protected readonly isSsoRefused = computed(() => this.sso() === 'refused');

  protected submitCredentials(): void {
    if (this.credentials.invalid) {
      this.credentials.markAllAsTouched();
      return;
    }
    this.send(this.credentials.getRawValue());
  }

  protected submitCode(): void {
    if (this.codeForm.invalid) {
      this.codeForm.markAllAsTouched();
      return;
    }
    this.send({ ...this.credentials.getRawValue(), code: this.codeForm.controls.code.value });
  }

  protected backToCredentials(): void {
    this.step.set('credentials');
    this.codeForm.reset();
    this.errorText.set('');
  }

  protected signInWithSso(): void {
    // A full-page navigation: the server redirects to the hospital identity provider.
    this.document.location.assign('/api/auth/saml/login');
  }

  private send(request: LoginRequest): void {
    this.isPending.set(true);
    this.errorText.set('');
    this.session.signIn(request).subscribe({
      next: (user) => this.enter(user),
      error: (error: unknown) => this.refused(error, request),
    });
  }

  private refused(error: unknown, request: LoginRequest): void {
    this.isPending.set(false);
    const problem = problemOf(error);
    if (problem?.status === 401 && problem.type === TOTP_REQUIRED_PROBLEM) {
      if (this.step() === 'credentials' && request.code === undefined) {
        this.step.set('code');
        this.codePrompt.set(
          problem.detail ?? 'Enter the six-digit code from your authenticator app.',
        );
        return;
      }
      this.errorText.set(problem.detail ?? 'The code is not correct.');
      return;
    }
    const unmatched = applyFieldErrors(
      this.step() === 'code' ? this.codeForm : this.credentials,
      error,
    );
    this.errorText.set([problemMessage(error), ...unmatched].join(' '));
  }

  private enter(user: CurrentUser): void {
    const home = homeOf(user);
    const returnUrl = this.returnUrl();
    const isSafeReturn = !!returnUrl && returnUrl.startsWith('/') && !returnUrl.startsWith('//');
    const target =
      home === '/cases' && isSafeReturn && !returnUrl.startsWith('/sign-in') ? returnUrl : home;
    void this.router.navigateByUrl(target).finally(() => this.isPending.set(false));
  }
}
