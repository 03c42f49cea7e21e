import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { httpResource } from '@angular/common/http';
import { MatButton } from '@angular/material/button';
import { Router, RouterLink, RouterLinkActive, RouterOutlet } from '@angular/router';
import { roleLabels } from '@emberline/shared';
import { AuthSession } from './auth-session';
import { ClinicalCaution } from './clinical-caution';
import { handledByCaller } from './http-context-tokens';

/** The frame of every signed-in page: top bar with navigation, the page, the caution footer. */
@Component({
  selector: 'em-shell',
  imports: [RouterOutlet, RouterLink, RouterLinkActive, MatButton, ClinicalCaution],
  templateUrl: './shell.html',
  styleUrl: './shell.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class Shell {
  private readonly session = inject(AuthSession);
  private readonly router = inject(Router);

  protected readonly user = this.session.user;
  protected readonly isAdministrator = this.session.isAdministrator;
  /** Meetings are for the clinical roles; an administrator alone sees no case. */
  protected readonly isClinical = computed(() =>
    this.session.roles().some((role) => role !== 'administrator'),
  );
  /** The coordinator's booking queue. */
  protected readonly isCoordinator = computed(() =>
    this.session.roles().includes('nurse-coordinator'),
  );
  protected readonly mayWork = computed(() => {
    const user = this.user();
    return !!user && !user.mustEnrolTotp && user.roles.length > 0;
  });
  /**
   * The test mailbox's link, only where the server runs a local mail catcher (the demo) and for
   * the roles that may read it: asked once, a 404 or 403 simply leaves the link out.
   */
  private readonly devMail = httpResource<unknown>(() =>
    this.mayWork() && this.session.hasRole('administrator', 'nurse-coordinator')
      ? { url: '/api/dev/mail', context: handledByCaller() }
      : undefined,
  );
  protected readonly hasDevMail = computed(() => this.devMail.hasValue());
  protected readonly roleText = computed(() => {
    const roles = this.user()?.roles ?? [];
    return roles.length ? roles.map((role) => roleLabels[role]).join(', ') : 'No role yet';
  });
  protected readonly isSigningOut = signal(false);

  protected skipToContent(main: HTMLElement): void {
    main.focus();
  }

  protected signOut(): void {
    this.isSigningOut.set(true);
    this.session.signOut().subscribe({
      complete: () => this.leave(),
      error: () => this.leave(),
    });
  }

  private leave(): void {
    this.isSigningOut.set(false);
    void this.router.navigateByUrl('/sign-in');
  }
}
