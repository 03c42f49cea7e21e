import { ChangeDetectionStrategy, Component, input, output } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';

/**
 * A refused signature beside its form, in words; when the hospital sign-on is too old, the way
 * to renew it.
 */
@Component({
  selector: 'em-signing-notice',
  imports: [MatButton, MatIcon],
  template: `
    <div role="alert" class="notice" [class.is-shown]="!!message()">
      @if (message()) {
        <mat-icon aria-hidden="true">{{ needsFreshSso() ? 'login' : 'error' }}</mat-icon>
        <div class="words">
          <p>{{ message() }}</p>
          @if (needsFreshSso()) {
            <button mat-stroked-button type="button" (click)="signOnAgain.emit()">
              Sign in with hospital SSO again
            </button>
          }
        </div>
      }
    </div>
  `,
  styles: `
    .notice.is-shown {
      display: flex;
      gap: 8px;
      align-items: flex-start;
      padding: 8px 12px;
      border-radius: var(--mat-sys-corner-small);
      background: var(--mat-sys-error-container);
      color: var(--mat-sys-on-error-container);
      font: var(--mat-sys-body-medium);
    }

    .words {
      display: flex;
      flex-direction: column;
      align-items: flex-start;
      gap: 8px;
    }

    p {
      margin: 0;
    }

    mat-icon {
      flex: none;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SigningNotice {
  readonly message = input('');
  readonly needsFreshSso = input(false);
  readonly signOnAgain = output();
}
