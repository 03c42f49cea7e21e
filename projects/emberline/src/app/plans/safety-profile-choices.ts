import { HttpClient, HttpContext } from '@angular/common/http';
import { Injectable, inject, signal } from '@angular/core';
import type { SafetyProfileView } from '@emberline/shared';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/**
 * The safety profiles a presenter may judge an assessment by (`GET /api/safety-profiles`, the
 * default first), read once for all the plan cards on screen. A list that could not be read is
 * simply empty: the request then goes without a choice, to the default profile.
 */
@Injectable({ providedIn: 'root' })
export class SafetyProfileChoices {
  private readonly http = inject(HttpClient);
  private state: 'unread' | 'reading' | 'read' = 'unread';
  readonly profiles = signal<readonly SafetyProfileView[]>([]);

  /** Reads the list unless it is read or being read. */
  load(): void {
    if (this.state !== 'unread') return;
    this.state = 'reading';
    this.http
      .get<SafetyProfileView[]>('/api/safety-profiles', {
        context: new HttpContext().set(SHOWS_OWN_ERRORS, true),
      })
      .subscribe({
        next: (profiles) => {
          this.state = 'read';
          this.profiles.set(profiles);
        },
        error: () => {
          this.state = 'unread';
          this.profiles.set([]);
        },
      });
  }

  /** The next `load` reads afresh (an administrator may have changed a profile meanwhile). */
  forget(): void {
    if (this.state === 'read') this.state = 'unread';
  }
}
