/**
 * `npm run worker`: a process that only works assessment jobs, against the same database (and
 * the same file store) as the servers — on this machine or another (README.md, "Architecture").
 */
import { databaseUrl } from './database-url';
import { openDatabase } from './db';
import { logger } from './common/logger';
import { startAssessmentRuntime } from './modules/assessments/assessment-runtime';

const orm = await openDatabase();
const runtime = await startAssessmentRuntime({
  orm,
  connectionString: databaseUrl(),
  log: logger.error,
  isWorking: true,
});
logger.info(`Emberline assessment worker started (${runtime.pool?.threads ?? 0} threads).`);

async function shutDown(): Promise<void> {
  await runtime.close();
  await orm.close();
  process.exit(0);
}
process.on('SIGTERM', () => void shutDown());
process.on('SIGINT', () => void shutDown());
