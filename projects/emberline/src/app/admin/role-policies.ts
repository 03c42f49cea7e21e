import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatSlideToggle, type MatSlideToggleChange } from '@angular/material/slide-toggle';
import { roleLabels, type RolePolicyView } from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { AdminApi } from './admin-api';

/** Which roles must sign in with a second factor (TOTP); users of such a role enrol on next sign-in. */
@Component({
  selector: 'em-role-policies',
  imports: [MatSlideToggle, MatProgressBar, MatButton],
  template: `
    <section class="em-panel" aria-labelledby="policies-title">
      <h2 id="policies-title">Second factor by role</h2>
      <p class="em-note">
        A user holding any role that requires it must set up an authenticator app before doing
        anything else. Hospital SSO accounts rely on the identity provider's own second factor.
      </p>
      @if (policies.isLoading()) {
        <mat-progress-bar mode="indeterminate" aria-label="Loading role policies" />
      }
      @if (loadError()) {
        <p class="em-error-text" role="alert">
          The policies could not be loaded: {{ loadError() }}
        </p>
        <button mat-stroked-button type="button" (click)="policies.reload()">Try again</button>
      } @else if (policies.hasValue()) {
        <ul>
          @for (policy of policies.value(); track policy.role) {
            <li>
              <mat-slide-toggle
                [checked]="policy.requiresTotp"
                [disabled]="savingRole() === policy.role"
                (change)="change(policy, $event)"
              >
                {{ roleLabels[policy.role] }} requires a second factor
              </mat-slide-toggle>
            </li>
          }
        </ul>
      }
      @if (errorText()) {
        <p class="em-error-text" role="alert">{{ errorText() }}</p>
      }
    </section>
  `,
  styles: `
    ul {
      list-style: none;
      margin: 0;
      padding: 0;
      display: flex;
      flex-direction: column;
      gap: 8px;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RolePolicies {
  private readonly api = inject(AdminApi);

  protected readonly policies = this.api.rolePolicies();
  protected readonly roleLabels = roleLabels;
  protected readonly savingRole = signal<string | null>(null);
  protected readonly errorText = signal('');
  protected readonly loadError = computed(() =>
    this.policies.error() ? problemMessage(this.policies.error()) : '',
  );

  protected change(policy: RolePolicyView, event: MatSlideToggleChange): void {
    this.savingRole.set(policy.role);
    this.errorText.set('');
    this.api.setRolePolicy(policy.role, event.checked).subscribe({
      next: (saved) => {
        this.savingRole.set(null);
        this.policies.update((list) =>
          list?.map((item) => (item.role === saved.role ? saved : item)),
        );
      },
      error: (error: unknown) => {
        this.savingRole.set(null);
        // Put the switch back where the server has it.
        event.source.checked = policy.requiresTotp;
        this.errorText.set(`Not changed: ${problemMessage(error)}`);
      },
    });
  }
}
