import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { Router } from '@angular/router';
import { roleLabels, specialtyLabels, totpConfirmSchema, type TotpSetup } from '@emberline/shared';
import { homeOf } from '../core/access-guards';
import { AuthSession } from '../core/auth-session';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage } from '../core/problem';
import { zodValidator } from '../core/zod-validator';

/** The user's own account: who they are, their boards, and the second factor (TOTP). */
@Component({
  selector: 'em-account',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatError,
    MatInput,
    MatButton,
    MatIcon,
    FieldError,
  ],
  templateUrl: './account.html',
  styleUrl: './account.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class Account {
  private readonly session = inject(AuthSession);
  private readonly router = inject(Router);

  protected readonly user = this.session.user;
  protected readonly roleLabels = roleLabels;
  protected readonly specialtyLabels = specialtyLabels;
  protected readonly setup = signal<TotpSetup | null>(null);
  protected readonly isBusy = signal(false);
  protected readonly errorText = signal('');
  protected readonly doneText = signal('');
  /** The secret in groups of four characters, easier to type into an authenticator app. */
  protected readonly groupedSecret = computed(
    () =>
      this.setup()
        ?.secret.match(/.{1,4}/g)
        ?.join(' ') ?? '',
  );

  protected readonly confirmForm = inject(NonNullableFormBuilder).group({
    code: ['', [Validators.required, zodValidator(totpConfirmSchema.shape.code)]],
  });

  protected startSetup(): void {
    this.isBusy.set(true);
    this.errorText.set('');
    this.session.startTotpSetup().subscribe({
      next: (setup) => {
        this.isBusy.set(false);
        this.setup.set(setup);
      },
      error: (error: unknown) => {
        this.isBusy.set(false);
        this.errorText.set(problemMessage(error));
      },
    });
  }

  protected confirm(): void {
    if (this.confirmForm.invalid) {
      this.confirmForm.markAllAsTouched();
      return;
    }
    const wasRequired = this.user()?.mustEnrolTotp === true;
    this.isBusy.set(true);
    this.errorText.set('');
    this.session.confirmTotp(this.confirmForm.controls.code.value).subscribe({
      next: (user) => {
        this.isBusy.set(false);
        this.setup.set(null);
        this.confirmForm.reset();
        this.doneText.set(
          'The second factor is set up. From now on, sign-in asks for a code from the app.',
        );
        if (wasRequired) void this.router.navigateByUrl(homeOf(user));
      },
      error: (error: unknown) => {
        this.isBusy.set(false);
        const unmatched = applyFieldErrors(this.confirmForm, error);
        this.errorText.set([problemMessage(error), ...unmatched].join(' '));
      },
    });
  }
}
