import pg from 'pg';
import request from 'supertest';
import type { Express } from 'express';
import { inject } from 'vitest';
import type { MikroORM } from '@mikro-orm/postgresql';
import { createApp, type Services } from '../../server/src/app';
import { configFromEnvironment, type AppConfig } from '../../server/src/config';
import { migrate, openDatabase } from '../../server/src/db';
import {
  startAssessmentRuntime,
  type AssessmentRuntime,
  type AssessmentRuntimeOptions,
} from '../../server/src/modules/assessments/assessment-runtime';
import { MailCatcher, mailCatcherLimits } from '../../server/src/modules/mail/mail-catcher';
import { MailService, type MailSettings } from '../../server/src/modules/mail/mail.service';

export interface TestApp {
  app: Express;
  orm: MikroORM;
  config: AppConfig;
  logs: string[];
  /** The local SMTP catcher, when the suite asked for one. */
  mailCatcher: MailCatcher | null;
  /** The mail service the app sends with, when the suite asked for one. */
  mail: MailService | null;
  close(): Promise<void>;
}

/** The real application on the run's own database, migrated; logs are captured for checks. */
export async function startTestApp(
  overrides: Partial<AppConfig> = {},
  options: {
    /** Starts the assessment queue (and workers) once the database is open. */
    assessments?: (orm: MikroORM) => Promise<NonNullable<Services['assessments']>>;
    /** The board session's rooms, for a suite that checks what reaches them. */
    boardRoom?: Services['boardRoom'];
    /** Starts a local SMTP catcher on a free port and mounts /api/dev/mail. */
    mailCatcher?: boolean;
    /**
     * Starts the mail service (pg-boss queue and worker, polled fast) and hands it to the app;
     * it sends to `smtpUrl`, else to the suite's catcher.
     */
    mail?: Partial<MailSettings>;
  } = {},
): Promise<TestApp> {
  const url = inject('databaseUrl');
  const orm = await openDatabase(url);
  await migrate(orm);
  const sessionPool = new pg.Pool({ connectionString: url, max: 4 });
  const config: AppConfig = {
    ...configFromEnvironment({
      PORT: '4399',
      LOGIN_RATE_LIMIT: '1000',
      LOGIN_ACCOUNT_RATE_LIMIT: '1000',
      LOGIN_ADDRESS_RATE_LIMIT: '10000',
    }),
    ...overrides,
  };
  const logs: string[] = [];
  const assessments = options.assessments ? await options.assessments(orm) : null;
  const mailCatcher = options.mailCatcher
    ? await MailCatcher.start({ port: 0, ...mailCatcherLimits })
    : null;
  const log = (message: string, error?: unknown) =>
    logs.push(`${message} ${error instanceof Error ? error.stack : String(error ?? '')}`);
  const smtpUrl = options.mail?.smtpUrl ?? mailCatcher?.url;
  if (options.mail && !smtpUrl) throw new Error('mail needs an smtpUrl or the mail catcher');
  const mail =
    options.mail && smtpUrl
      ? await MailService.start(
          orm,
          {
            connectionString: url,
            ignoreTls: true,
            from: 'Emberline <no-reply@emberline.invalid>',
            retryLimit: 10,
            retryDelaySeconds: 1,
            pollingIntervalSeconds: 0.5,
            maintenanceIntervalSeconds: 60,
            ...options.mail,
            smtpUrl,
          },
          log,
        )
      : null;
  const app = createApp({
    assessments,
    mailCatcher,
    mail,
    boardRoom: options.boardRoom,
    orm,
    sessionPool,
    config,
    log,
  });
  return {
    app,
    orm,
    config,
    logs,
    mailCatcher,
    mail,
    async close() {
      await mail?.stop();
      await mailCatcher?.close();
      await sessionPool.end();
      await orm.close();
    },
  };
}

/**
 * The test app with the assessment queue in this process, polled fast for tests; the options
 * (working or only queueing, file store, queue, pool and reaper settings) are the suite's own.
 * Its log lines go to the app's captured logs.
 */
export async function startTestAppWithAssessments(
  options: Omit<AssessmentRuntimeOptions, 'orm' | 'log' | 'connectionString'>,
): Promise<{ testApp: TestApp; runtime: AssessmentRuntime }> {
  let runtime: AssessmentRuntime | undefined;
  // The runtime logs before the app exists: into this list first, then into the app's.
  let logs: string[] = [];
  const testApp = await startTestApp(
    {},
    {
      assessments: async (orm) => {
        runtime = await startAssessmentRuntime({
          ...options,
          orm,
          connectionString: inject('databaseUrl'),
          log: (message, error) => logs.push(`${message} ${String(error ?? '')}`),
          queue: { pollingIntervalSeconds: 0.5, maintenanceIntervalSeconds: 1, ...options.queue },
        });
        return runtime;
      },
    },
  );
  testApp.logs.push(...logs);
  logs = testApp.logs;
  if (!runtime) throw new Error('the assessment runtime did not start');
  return { testApp, runtime };
}

/** Empties every table but the migrations' own, between suites. */
export async function truncateAll(orm: MikroORM): Promise<void> {
  const tables = await orm.em
    .getConnection()
    .execute<{ tablename: string }[]>(
      "select tablename from pg_tables where schemaname = 'public' and tablename <> 'mikro_orm_migrations'",
    );
  if (tables.length) {
    await orm.em
      .getConnection()
      .execute(`truncate ${tables.map((t) => `"${t.tablename}"`).join(', ')} cascade`);
  }
}

/**
 * A browser-like client: keeps cookies, and echoes the XSRF-TOKEN cookie in X-XSRF-TOKEN on
 * state-changing requests, as Angular's HttpClient does.
 */
export class ApiClient {
  readonly agent: ReturnType<typeof request.agent>;

  constructor(app: Express) {
    this.agent = request.agent(app);
  }

  private csrfToken(): string | undefined {
    return this.agent.jar.getCookie('XSRF-TOKEN', {
      domain: '127.0.0.1',
      path: '/',
      secure: false,
      script: true,
    })?.value;
  }

  private async ensureCsrf(): Promise<string> {
    let token = this.csrfToken();
    if (!token) {
      await this.agent.get('/api/health').set('Host', '127.0.0.1');
      token = this.csrfToken();
    }
    if (!token) throw new Error('the server set no XSRF-TOKEN cookie');
    return token;
  }

  get(path: string) {
    return this.agent.get(path).set('Host', '127.0.0.1');
  }

  async send(
    method: 'post' | 'patch' | 'put' | 'delete',
    path: string,
    body?: object,
    headers: Record<string, string> = {},
  ) {
    const token = await this.ensureCsrf();
    const call = this.agent[method](path)
      .set('Host', '127.0.0.1')
      .set('X-XSRF-TOKEN', token)
      .set(headers);
    return body === undefined ? call : call.send(body);
  }

  post(path: string, body?: object) {
    return this.send('post', path, body ?? {});
  }

  patch(path: string, body: object) {
    return this.send('patch', path, body);
  }

  put(path: string, body: object) {
    return this.send('put', path, body);
  }

  delete(path: string) {
    return this.send('delete', path);
  }

  async signIn(email: string, password: string, code?: string) {
    return this.post('/api/auth/login', { email, password, ...(code ? { code } : {}) });
  }

  /** A sign-in as if from `address` (the app must trust one proxy hop: `trustProxy: 1`). */
  async signInFrom(address: string, email: string, password: string) {
    return this.send(
      'post',
      '/api/auth/login',
      { email, password },
      { 'X-Forwarded-For': address },
    );
  }
}

/** The session cookie a signed-in client holds, as a `Cookie` header value for a socket. */
export function sessionCookieOf(client: ApiClient): string {
  const cookie = client.agent.jar.getCookie('emberline.sid', {
    domain: '127.0.0.1',
    path: '/',
    secure: false,
    script: false,
  });
  if (!cookie) throw new Error('not signed in');
  return `${cookie.name}=${cookie.value}`;
}
