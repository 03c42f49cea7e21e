import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { actorOf, requireRole } from '../../common/auth-middleware';
import { NotFoundError } from '../../common/errors';
import { pathId } from '../../common/validate';
import { writeAudit } from '../audit/audit.service';
import type { MailCatcher } from './mail-catcher';

export interface DevMailAttachmentView {
  index: number;
  filename: string;
  contentType: string;
  size: number;
}

export interface DevMailMessageView {
  id: string;
  from: string;
  to: string[];
  subject: string;
  receivedAt: string;
  attachments: DevMailAttachmentView[];
}

/**
 * The local catcher's mailbox, mounted at /api/dev/mail only while the catcher runs in this
 * process (the demo); elsewhere the path answers 404. Administrators and nurse coordinators:
 *   GET /                            → DevMailMessageView[], newest first, no bodies
 *   GET /:id/attachments/:index      → the attachment's bytes with its content type
 */
export function devMailRoutes(orm: MikroORM, catcher: MailCatcher): Router {
  const router = Router();
  const allowed = requireRole('administrator', 'nurse-coordinator');

  router.get('/', allowed, async (request, response) => {
    const messages = catcher.list();
    await writeAudit(orm.em, actorOf(request), {
      action: 'dev-mail.list',
      detail: { count: messages.length },
    });
    response.json(
      messages.map((message): DevMailMessageView => ({
        id: message.id,
        from: message.from,
        to: message.to,
        subject: message.subject,
        receivedAt: message.receivedAt.toISOString(),
        attachments: message.attachments.map((attachment, index) => ({
          index,
          filename: attachment.filename,
          contentType: attachment.contentType,
          size: attachment.size,
        })),
      })),
    );
  });

  router.get('/:id/attachments/:index', allowed, async (request, response) => {
    const id = pathId(request.params.id, 'The message');
    const index = /^\d{1,3}$/.test(String(request.params.index))
      ? Number(request.params.index)
      : -1;
    const attachment = catcher.find(id)?.attachments[index];
    if (!attachment) throw new NotFoundError('The attachment');
    await writeAudit(orm.em, actorOf(request), {
      action: 'dev-mail.attachment-read',
      entityType: 'mail',
      entityId: id,
      detail: { index },
    });
    response
      .type(attachment.contentType)
      .attachment(attachment.filename)
      .set('Cache-Control', 'no-store')
      .send(attachment.content);
  });

  return router;
}
