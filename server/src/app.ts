import express, { type Express, type RequestHandler } from 'express';
import cookieParser from 'cookie-parser';
import helmet from 'helmet';
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { RequestContext, type MikroORM } from '@mikro-orm/postgresql';
import type { Pool } from 'pg';
import type { AppConfig } from './config';
import { csrfProtection } from './common/csrf';
import { errorMiddleware, notFoundHandler } from './common/error-middleware';
import { adminRoutes } from './modules/admin/admin.routes';
import type { AssessmentRuntime } from './modules/assessments/assessment-runtime';
import { assessmentStores } from './modules/assessments/assessment-runtime';
import { assessmentRoutes } from './modules/assessments/assessments.routes';
import { imagingSettingsFromEnvironment } from './modules/imaging/imaging-settings';
import { authRoutes } from './modules/auth/auth.routes';
import { currentUserMiddleware, sessionMiddleware } from './modules/auth/session';
import { boardRoutes } from './modules/boards/board.routes';
import { caseRoutes } from './modules/cases/case.routes';
import { healthRoutes } from './modules/health/health.routes';
import { imagingRoutes } from './modules/imaging/imaging.routes';
import { adminProfileRoutes } from './modules/plans/admin-profiles.routes';
import { planRoutes } from './modules/plans/plans.routes';
import { meetingRoutes } from './modules/meetings/meetings.routes';
import { minutesRoutes } from './modules/meetings/minutes.routes';
import { decisionRoutes } from './modules/decisions/decisions.routes';
import { voteRoutes } from './modules/votes/votes.routes';
import { annotationRoutes } from './modules/annotations/annotations.routes';
import { keyImageRoutes } from './modules/key-images/key-images.routes';
import { BoardRoom } from './modules/board-session/board-room';
import { samlRoutes, samlStatusRoutes } from './modules/saml/saml.routes';
import { structuresRoutes } from './modules/structures/structures.routes';
import { summaryPdfRoutes } from './modules/summary-pdf/summary-pdf.routes';
import { devMailRoutes } from './modules/mail/dev-mail.routes';
import type { MailCatcher } from './modules/mail/mail-catcher';
import type { MailService } from './modules/mail/mail.service';
import { bookingRoutes } from './modules/bookings/bookings.routes';
import { checklistThresholdRoutes } from './modules/bookings/checklist-thresholds.routes';

export interface Services {
  orm: MikroORM;
  /** For the session store; separate from the ORM's pool. */
  sessionPool: Pool;
  config: AppConfig;
  log: (message: string, error?: unknown) => void;
  /** The session middleware, when the caller shares it with Socket.IO; made here otherwise. */
  session?: RequestHandler;
  /**
   * The board session's rooms, shared with the realtime server so that REST actions reach the
   * room; a fresh one (emitting nowhere) when the caller runs no sockets.
   */
  boardRoom?: BoardRoom;
  /** The assessment queue; without it a request for an assessment answers 503. */
  assessments?: Pick<AssessmentRuntime, 'queue' | 'displays'> | null;
  /** The local SMTP catcher when it runs in this process (demo, tests): adds /api/dev/mail. */
  mailCatcher?: MailCatcher | null;
  /**
   * Outgoing e-mail (booking notifications); without it bookings still work and their views say
   * that no notification was sent.
   */
  mail?: MailService | null;
}

export const samlCallbackPath = '/api/auth/saml/callback';

/** The whole HTTP application, with nothing global: tests build one per suite. */
export function createApp(services: Services): Express {
  const { orm, config } = services;
  const boardRoom = services.boardRoom ?? new BoardRoom();
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', config.trustProxy);
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          fontSrc: ["'self'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          connectSrc: ["'self'"],
          workerSrc: ["'self'", 'blob:'],
          formAction: ["'self'", ...(config.saml ? [new URL(config.saml.entryPoint).origin] : [])],
          upgradeInsecureRequests: config.isCookieSecure ? [] : null,
        },
      },
      strictTransportSecurity: config.isCookieSecure,
    }),
  );
  app.use(express.json({ limit: '256kb' }));
  app.use(express.urlencoded({ extended: false, limit: '512kb' }));
  app.use(cookieParser());
  app.use('/api', services.session ?? sessionMiddleware(config, services.sessionPool));
  app.use((_request, _response, next) => RequestContext.create(orm.em, next));
  app.use('/api', currentUserMiddleware(orm, config));
  app.use(
    '/api',
    csrfProtection({
      secret: config.sessionSecret,
      isSecure: config.isCookieSecure,
      exemptPaths: ['/auth/saml/callback'],
    }),
  );

  app.use('/api/health', healthRoutes(orm));
  app.use('/api/auth', authRoutes(orm, config, boardRoom));
  app.use('/api/auth/saml', samlStatusRoutes(config));
  if (config.saml) app.use('/api/auth/saml', samlRoutes(orm, config, config.saml));
  app.use('/api/boards', boardRoutes(orm));
  app.use('/api/cases', caseRoutes(orm));
  app.use('/api', imagingRoutes(orm));
  app.use('/api', structuresRoutes(orm));
  app.use('/api', planRoutes(orm));
  app.use('/api', meetingRoutes(orm, boardRoom));
  app.use('/api', minutesRoutes(orm, boardRoom));
  app.use('/api', decisionRoutes(orm, boardRoom));
  app.use('/api', voteRoutes(orm, boardRoom));
  app.use('/api', annotationRoutes(orm, boardRoom));
  app.use('/api', keyImageRoutes(orm));
  app.use('/api', summaryPdfRoutes(orm));
  app.use(
    '/api',
    bookingRoutes(orm, {
      mail: services.mail ?? null,
      timeZone: config.hospitalTimeZone ?? 'UTC',
      log: services.log,
    }),
  );
  app.use(
    '/api',
    assessmentRoutes(orm, {
      queue: services.assessments?.queue ?? null,
      displays:
        services.assessments?.displays ??
        assessmentStores(imagingSettingsFromEnvironment().fileStoreDir).displays,
      isBioheatRequested: true,
      log: services.log,
    }),
  );
  app.use('/api/admin', checklistThresholdRoutes(orm));
  app.use('/api/admin', adminRoutes(orm, boardRoom));
  app.use('/api/admin', adminProfileRoutes(orm));
  if (services.mailCatcher) app.use('/api/dev/mail', devMailRoutes(orm, services.mailCatcher));
  app.use('/api', notFoundHandler);

  if (config.clientDist && existsSync(join(config.clientDist, 'index.html'))) {
    const dist = resolve(config.clientDist);
    app.use(express.static(dist, { index: false, maxAge: '1h' }));
    app.get('/{*splat}', (_request, response) => {
      response.sendFile(join(dist, 'index.html'), { headers: { 'Cache-Control': 'no-cache' } });
    });
  }

  app.use(errorMiddleware((message, error) => services.log(message, error)));
  return app;
}
