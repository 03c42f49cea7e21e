import { Injectable, Injector, inject } from '@angular/core';

/**
 * Shows an error sentence in a snack bar. The snack bar module is imported on first use, so the
 * overlay code stays out of the initial bundle.
 */
@Injectable({ providedIn: 'root' })
export class ProblemNotice {
  private readonly injector = inject(Injector);

  async show(message: string): Promise<void> {
    const { MatSnackBar } = await import('@angular/material/snack-bar');
    this.injector.get(MatSnackBar).open(message, 'Dismiss', {
      duration: 10_000,
      politeness: 'assertive',
    });
  }
}
