import { DatePipe, DecimalPipe } from '@angular/common';
import { HttpContext, httpResource } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatTableModule } from '@angular/material/table';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';

/** A caught message as `GET /api/dev/mail` lists it (server/src/modules/mail/dev-mail.routes.ts). */
export interface DevMailMessage {
  id: string;
  from: string;
  to: string[];
  subject: string;
  receivedAt: string;
  attachments: { index: number; filename: string; contentType: string; size: number }[];
}

/**
 * The demo's test mailbox: what the local SMTP catcher received, newest first, with links to the
 * attachments (calendar invitations among them). Bodies stay on the server.
 */
@Component({
  selector: 'em-dev-mail',
  imports: [DatePipe, DecimalPipe, MatTableModule, TypedCellDef, MatButton, MatProgressBar],
  templateUrl: './dev-mail.html',
  styleUrl: './dev-mail.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class DevMail {
  protected readonly columns = ['receivedAt', 'from', 'to', 'subject', 'attachments'];
  protected readonly messages = httpResource<DevMailMessage[]>(() => ({
    url: '/api/dev/mail',
    context: new HttpContext().set(SHOWS_OWN_ERRORS, true),
  }));
  protected readonly rows = computed(() => (this.messages.hasValue() ? this.messages.value() : []));
  /** 404: this server runs no catcher (its mail goes to a real relay). */
  protected readonly isAbsent = computed(() => {
    const error = this.messages.error() as { status?: number } | undefined;
    return error?.status === 404;
  });
  protected readonly errorText = computed(() =>
    this.messages.error() && !this.isAbsent() ? problemMessage(this.messages.error()) : '',
  );

  protected attachmentUrl(message: DevMailMessage, index: number): string {
    return `/api/dev/mail/${encodeURIComponent(message.id)}/attachments/${index}`;
  }
}
