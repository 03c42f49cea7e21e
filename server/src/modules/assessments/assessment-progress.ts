/**
 * Progress travels through PostgreSQL: whichever process runs a job NOTIFYs on one channel and
 * every server process LISTENs and relays to its sockets, so a worker on another machine
 * reaches the browser without other infrastructure (README.md here, "Progress").
 */
import pg from 'pg';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { AssessmentProgressEvent } from '@emberline/shared';

export const assessmentProgressChannel = 'emberline_assessment_progress';

export async function notifyProgress(
  em: EntityManager,
  event: AssessmentProgressEvent,
): Promise<void> {
  await em
    .getConnection()
    .execute('select pg_notify(?, ?)', [assessmentProgressChannel, JSON.stringify(event)]);
}

/** LISTENs on the progress channel and calls `deliver` for each event; reconnects on loss. */
export class AssessmentProgressListener {
  private client: pg.Client | null = null;
  private isClosed = false;
  private retryTimer: NodeJS.Timeout | null = null;

  constructor(
    private readonly connectionString: string,
    private readonly deliver: (event: AssessmentProgressEvent) => void,
    private readonly log: (message: string, error?: unknown) => void,
  ) {}

  async start(): Promise<void> {
    const client = new pg.Client({ connectionString: this.connectionString });
    client.on('notification', (message) => {
      if (message.channel !== assessmentProgressChannel || !message.payload) return;
      try {
        this.deliver(JSON.parse(message.payload) as AssessmentProgressEvent);
      } catch (error) {
        this.log('An assessment progress notice could not be read.', error);
      }
    });
    client.on('error', (error) => {
      this.log('The assessment progress listener lost its connection.', error);
      this.reconnectSoon();
    });
    await client.connect();
    await client.query(`LISTEN ${assessmentProgressChannel}`);
    this.client = client;
  }

  private reconnectSoon(): void {
    if (this.isClosed || this.retryTimer) return;
    void this.client?.end().catch(() => undefined);
    this.client = null;
    this.retryTimer = setTimeout(() => {
      this.retryTimer = null;
      this.start().catch((error: unknown) => {
        this.log('The assessment progress listener could not reconnect.', error);
        this.reconnectSoon();
      });
    }, 2_000);
  }

  async close(): Promise<void> {
    this.isClosed = true;
    if (this.retryTimer) clearTimeout(this.retryTimer);
    await this.client?.end();
  }
}
