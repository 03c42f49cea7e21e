import { createServer } from 'node:http';
import pg from 'pg';
import { fileURLToPath } from 'node:url';
import { createApp } from './app';
import { configFromEnvironment } from './config';
import { databaseUrl } from './database-url';
import { openDatabase } from './db';
import { logger } from './common/logger';
import { sessionMiddleware } from './modules/auth/session';
import { samlSettingsFromEnvironment } from './modules/saml/saml-settings';
import { AssessmentProgressListener } from './modules/assessments/assessment-progress';
import { startAssessmentRuntime } from './modules/assessments/assessment-runtime';
import { assessmentSocketFeature, relayProgress } from './modules/assessments/assessment.socket';
import { createRealtimeServer } from './realtime/io';
import { BoardRoom } from './modules/board-session/board-room';
import { boardSessionAdapter, boardSessionFeatures } from './modules/board-session/board-session';
import { startDemoMailCatcher } from './modules/mail/mail-catcher';
import { MailService, mailSettingsFromEnvironment } from './modules/mail/mail.service';
import { startFollowUpDueCheck } from './modules/bookings/follow-up-due';

const config = configFromEnvironment();
config.clientDist =
  process.env.CLIENT_DIST ??
  fileURLToPath(new URL('../../dist/emberline/browser', import.meta.url));
config.saml = await samlSettingsFromEnvironment(config, process.env, process.env.FAKE_IDP_DIR);
const orm = await openDatabase();
const sessionPool = new pg.Pool({ connectionString: databaseUrl(), max: 4 });
const assessments = await startAssessmentRuntime({
  orm,
  connectionString: databaseUrl(),
  log: logger.error,
  isWorking: process.env.ASSESSMENT_IN_SERVER !== '0',
});
// The demo's mail goes to a local catcher (read at /api/dev/mail); a real relay replaces it.
const { catcher: mailCatcher, url: catcherUrl } = await startDemoMailCatcher(
  process.env,
  logger.error,
);
if (mailCatcher) {
  logger.info(`Local mail catcher (SMTP) listening on 127.0.0.1:${mailCatcher.port}`);
} else if (catcherUrl) {
  logger.info(`Mail catcher port taken (another server process?): mail goes to ${catcherUrl}`);
}
const mailSettings = mailSettingsFromEnvironment(databaseUrl(), catcherUrl);
const mail = mailSettings ? await MailService.start(orm, mailSettings, logger.error) : null;
if (!mail) logger.info('No SMTP_URL: e-mail notifications are off.');
const session = sessionMiddleware(config, sessionPool);
const boardRoom = new BoardRoom();
const app = createApp({
  orm,
  sessionPool,
  config,
  log: logger.error,
  session,
  assessments,
  boardRoom,
  mailCatcher,
  mail,
});
// Treated cases whose follow-up imaging falls due: moved to follow-up-due, coordinators told once.
const followUpCheck = startFollowUpDueCheck(orm, mail, {
  timeZone: config.hospitalTimeZone ?? 'UTC',
  intervalMinutes: Number(process.env.FOLLOW_UP_CHECK_MINUTES ?? 15),
  log: logger.error,
});

const port = Number(process.env.PORT ?? 4300);
const host = process.env.HOST ?? '127.0.0.1';
const server = createServer(app);
const socketAdapter = await boardSessionAdapter(databaseUrl(), logger.error);
const sessionFeatures = boardSessionFeatures(orm);
const io = createRealtimeServer(
  server,
  { orm, config, session, boardRoom, log: logger.error, adapter: socketAdapter?.adapter },
  [assessmentSocketFeature(orm, logger.error)],
  sessionFeatures.features,
);
const progress = new AssessmentProgressListener(databaseUrl(), relayProgress(io), logger.error);
await progress.start();
server.listen(port, host, () => logger.info(`Emberline listening on http://${host}:${port}`));

async function shutDown(): Promise<void> {
  followUpCheck.stop();
  await io.close();
  await sessionFeatures.close();
  await socketAdapter?.close();
  server.close();
  await progress.close();
  await assessments.close();
  await mail?.stop();
  await mailCatcher?.close();
  await sessionPool.end();
  await orm.close();
  process.exit(0);
}
process.on('SIGTERM', () => void shutDown());
process.on('SIGINT', () => void shutDown());
