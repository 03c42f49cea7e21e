import { ChangeDetectionStrategy, Component, inject } from '@angular/core';
import { AuthSession } from './auth-session';

/** A signed-in account without any role (a first hospital sign-on): nothing to see yet. */
@Component({
  selector: 'em-no-role',
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <section class="em-page" aria-labelledby="no-role-title">
      <div class="em-panel">
        <h1 id="no-role-title">Waiting for a role</h1>
        <p>
          You are signed in as {{ user()?.displayName }} ({{ user()?.email }}), but your account has
          no role yet. An administrator must grant you a role — presenting physician, board member,
          proceduralist or nurse coordinator — before you can see cases or boards.
        </p>
        <p class="em-muted">Once a role is granted, reload the page.</p>
      </div>
    </section>
  `,
})
export class NoRole {
  protected readonly user = inject(AuthSession).user;
}
