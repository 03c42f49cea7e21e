/**
 * The assessment job queue: pg-boss 10 on the application's own PostgreSQL database (schema
 * `pgboss`), so that several server processes and separate worker processes share it with no
 * other infrastructure.
 *
 * A job only carries the assessment id; the assessment row holds everything else. A worker
 * that dies mid-job leaves its job `active`; once `expireInSeconds` has passed, pg-boss's
 * maintenance fails it by timeout and puts it back for another worker (`retryLimit`). The
 * processor makes the result write idempotent, so a job completes exactly once.
 */
import PgBoss from 'pg-boss';

export const assessmentQueueName = 'plan-assessment';

export interface AssessmentQueueSettings {
  connectionString: string;
  /** An active job whose worker has gone quiet this long is retried. */
  expireInSeconds: number;
  /** How often pg-boss looks for expired jobs. */
  maintenanceIntervalSeconds: number;
  retryLimit: number;
  pollingIntervalSeconds: number;
}

export function assessmentQueueSettingsFromEnvironment(
  connectionString: string,
  env = process.env,
): AssessmentQueueSettings {
  return {
    connectionString,
    expireInSeconds: Number(env.ASSESSMENT_JOB_EXPIRE_SECONDS ?? 300),
    maintenanceIntervalSeconds: Number(env.ASSESSMENT_MAINTENANCE_SECONDS ?? 30),
    retryLimit: Number(env.ASSESSMENT_RETRY_LIMIT ?? 3),
    pollingIntervalSeconds: Number(env.ASSESSMENT_POLLING_SECONDS ?? 0.5),
  };
}

export interface AssessmentJobData {
  assessmentId: string;
}

export type AssessmentJobHandler = (
  data: AssessmentJobData,
  job: { id: string; retryCount: number },
) => Promise<void>;

export class AssessmentQueue {
  private constructor(
    private readonly boss: PgBoss,
    private readonly settings: AssessmentQueueSettings,
  ) {}

  /** Connects, installs or migrates pg-boss's schema and makes sure the queue exists. */
  static async start(
    settings: AssessmentQueueSettings,
    onError: (error: Error) => void,
  ): Promise<AssessmentQueue> {
    const boss = new PgBoss({
      connectionString: settings.connectionString,
      schema: 'pgboss',
      max: 4,
      maintenanceIntervalSeconds: settings.maintenanceIntervalSeconds,
      monitorStateIntervalSeconds: Math.max(settings.maintenanceIntervalSeconds, 10),
      application_name: 'emberline-assessments',
    });
    boss.on('error', onError);
    await boss.start();
    // pg-boss 10 needs the queue to exist before `send` (DEVELOPERS.md, "Stack notes");
    // createQueue is idempotent.
    const existing = await boss.getQueue(assessmentQueueName);
    if (!existing) {
      await boss.createQueue(assessmentQueueName, {
        name: assessmentQueueName,
        retryLimit: settings.retryLimit,
        retryDelay: 0,
        expireInSeconds: settings.expireInSeconds,
      });
    } else {
      await boss.updateQueue(assessmentQueueName, {
        name: assessmentQueueName,
        retryLimit: settings.retryLimit,
        retryDelay: 0,
        expireInSeconds: settings.expireInSeconds,
      });
    }
    return new AssessmentQueue(boss, settings);
  }

  get retryLimit(): number {
    return this.settings.retryLimit;
  }

  /**
   * Queues one assessment under the job id its row already holds (the row is the outbox: it is
   * committed first, with its job id, and the reaper sends again whatever did not arrive).
   * Sending an id that is already queued does nothing, so a second send never doubles a job.
   */
  async send(data: AssessmentJobData, jobId: string): Promise<void> {
    await this.boss.send(assessmentQueueName, data, {
      id: jobId,
      retryLimit: this.settings.retryLimit,
      expireInSeconds: this.settings.expireInSeconds,
    });
  }

  /** The job's state (`created`, `retry`, `active`, `completed`, `cancelled`, `failed`), or null. */
  async jobState(jobId: string): Promise<{ state: string; retryCount: number } | null> {
    const found = await this.boss.getDb().executeSql(
      `SELECT state, retry_count AS "retryCount" FROM pgboss.job WHERE name = $1 AND id = $2
       UNION ALL
       SELECT state, retry_count AS "retryCount" FROM pgboss.archive WHERE name = $1 AND id = $2`,
      [assessmentQueueName, jobId],
    );
    const rows = found.rows as { state: string; retryCount: number }[];
    return rows[0] ?? null;
  }

  /**
   * Takes jobs one at a time per worker slot; `concurrency` slots in this process. A handler
   * that throws fails the job (pg-boss retries it up to `retryLimit`).
   */
  async work(concurrency: number, handler: AssessmentJobHandler): Promise<void> {
    for (let slot = 0; slot < concurrency; slot++) {
      await this.boss.work<AssessmentJobData>(
        assessmentQueueName,
        {
          batchSize: 1,
          pollingIntervalSeconds: this.settings.pollingIntervalSeconds,
          includeMetadata: true,
        },
        async (jobs) => {
          for (const job of jobs) {
            await handler(job.data, { id: job.id, retryCount: job.retryCount });
          }
        },
      );
    }
  }

  /** Jobs of the queue by state (for tests and the health page). */
  async jobStates(): Promise<Record<string, number>> {
    const rows = await this.boss
      .getDb()
      .executeSql(
        `SELECT state, count(*)::int AS count FROM pgboss.job WHERE name = $1 GROUP BY state`,
        [assessmentQueueName],
      );
    return Object.fromEntries(
      (rows.rows as { state: string; count: number }[]).map((row) => [row.state, row.count]),
    );
  }

  async stop(): Promise<void> {
    await this.boss.stop({ graceful: true, wait: true, timeout: 10_000 });
  }
}
