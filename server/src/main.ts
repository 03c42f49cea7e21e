import pg from 'pg';
import { fileURLToPath } from 'node:url';
import { createApp } from './app';
import { configFromEnvironment } from './config';
import { databaseUrl } from './database-url';
import { openDatabase } from './db';
import { logger } from './common/logger';
import { samlSettingsFromEnvironment } from './modules/saml/saml-settings';

const config = configFromEnvironment();
config.clientDist =
  process.env.CLIENT_DIST ??
  fileURLToPath(new URL('../../dist/emberline/browser', import.meta.url));
config.saml = await samlSettingsFromEnvironment(config, process.env, process.env.FAKE_IDP_DIR);
const orm = await openDatabase();
const sessionPool = new pg.Pool({ connectionString: databaseUrl(), max: 4 });
const app = createApp({ orm, sessionPool, config, log: logger.error });

const port = Number(process.env.PORT ?? 4300);
const host = process.env.HOST ?? '127.0.0.1';
const server = app.listen(port, host, () =>
  logger.info(`Emberline listening on http://${host}:${port}`),
);

async function shutDown(): Promise<void> {
  server.close();
  await sessionPool.end();
  await orm.close();
  process.exit(0);
}
process.on('SIGTERM', () => void shutDown());
process.on('SIGINT', () => void shutDown());
