import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { actorOf, requireSignIn, signedInUser } from '../../common/auth-middleware';
import { pathId } from '../../common/validate';
import { writeAudit } from '../audit/audit.service';
import { keyImageStore } from '../key-images/key-images.routes';
import { loadSummaryContent } from './summary-content';
import { renderSummaryPdf } from './summary-pdf';

/**
 * The board summary, mounted at /api:
 *   GET /cases/:id/summary.pdf   the case's board summary as a PDF (anyone who may see the case;
 *                                a case out of reach 404, signed out 401), audited as
 *                                `case.summary-pdf`
 */
export function summaryPdfRoutes(orm: MikroORM): Router {
  const router = Router();
  const keyImages = keyImageStore();

  router.get('/cases/:id/summary.pdf', requireSignIn, async (request, response) => {
    const caseId = pathId(request.params.id, 'The case');
    const em = orm.em.fork();
    const content = await loadSummaryContent(em, signedInUser(request), caseId, keyImages);
    const pdf = await renderSummaryPdf(content);
    // Audited once the PDF exists, so that a failed rendering records no download.
    await writeAudit(em, actorOf(request), {
      action: 'case.summary-pdf',
      entityType: 'case',
      entityId: caseId,
      detail: {
        plans: content.plans.length,
        decisionId: content.decision?.id ?? null,
        keyImages: content.keyImages.length,
        bytes: pdf.byteLength,
      },
    });
    response
      .status(200)
      .type('application/pdf')
      .set({
        'Content-Disposition': `attachment; filename="board-summary-${content.caseCode}.pdf"`,
        'Cache-Control': 'no-store',
      })
      .send(pdf);
  });

  return router;
}
