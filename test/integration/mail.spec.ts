/**
 * E-mail notifications end to end: a mail queued on pg-boss reaches a real SMTP server (the local
 * catcher, RFC 5321) exactly once, with its calendar invitation readable as RFC 5545 iCalendar;
 * a relay that is away is retried until it answers; a job run again after a send that worked
 * sends nothing; the catcher's mailbox is for administrators and nurse coordinators only.
 */
import nodemailer from 'nodemailer';
import PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { calendarInvitation } from '../../server/src/modules/mail/invitation';
import {
  MailCatcher,
  mailCatcherLimits,
  startDemoMailCatcher,
  type CaughtMessage,
} from '../../server/src/modules/mail/mail-catcher';
import { MailDelivery } from '../../server/src/modules/mail/mail-delivery.entity';
import {
  MailService,
  mailQueueName,
  type MailSettings,
} from '../../server/src/modules/mail/mail.service';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo } from '../support/demo';

let testApp: TestApp;
/** The relay the mail service sends to; closed and started again on the same port below. */
let relay: MailCatcher;
let relayPort: number;
let mail: MailService;

const catcherSettings = mailCatcherLimits;

function settings(smtpUrl: string): MailSettings {
  return {
    connectionString: inject('databaseUrl'),
    smtpUrl,
    ignoreTls: true,
    from: 'Emberline <no-reply@emberline.invalid>',
    retryLimit: 10,
    // Short here so that the retry test takes seconds; 5 s (growing) in the product.
    retryDelaySeconds: 1,
    pollingIntervalSeconds: 0.5,
    maintenanceIntervalSeconds: 60,
  };
}

async function waitFor<T>(read: () => Promise<T | null> | T | null, what: string): Promise<T> {
  const startedAt = Date.now();
  for (;;) {
    const value = await read();
    if (value !== null) return value;
    if (Date.now() - startedAt > 20_000) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

const pause = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

function withSubject(catcher: MailCatcher, subject: string): CaughtMessage[] {
  return catcher.list().filter((message) => message.subject === subject);
}

/** The invitation as a named file (`invitation.ics`). */
function icsOf(message: CaughtMessage): CaughtMessage['attachments'][number] {
  const ics = message.attachments.find((attachment) => attachment.filename.endsWith('.ics'));
  if (!ics) throw new Error('the message has no .ics attachment');
  return ics;
}

/** The catcher the test app mounts at /api/dev/mail. */
function catcherOfApp(): MailCatcher {
  if (!testApp.mailCatcher) throw new Error('the test app runs no mail catcher');
  return testApp.mailCatcher;
}

async function delivery(id: string): Promise<MailDelivery> {
  return testApp.orm.em.fork().findOneOrFail(MailDelivery, { id });
}

/**
 * The VEVENT's properties of an iCalendar text, by RFC 5545 §3.1: lines end in CRLF, and a line
 * that starts with a space or a tab continues the previous one (unfolding removes the CRLF and
 * that one character). A property's name ends at the first ";" (parameters) or ":" (value).
 * Written here rather than taken from a parser library, so the check does not share code with
 * the generator.
 */
function icalendarProperties(text: string): {
  calendar: Map<string, string>;
  event: Map<string, string>;
} {
  expect(text).toMatch(/\r\n/);
  const lines = text
    .replace(/\r\n[ \t]/g, '')
    .split('\r\n')
    .filter(Boolean);
  const calendar = new Map<string, string>();
  const event = new Map<string, string>();
  let inEvent = false;
  for (const line of lines) {
    if (line === 'BEGIN:VEVENT') inEvent = true;
    else if (line === 'END:VEVENT') inEvent = false;
    else {
      const nameEnd = line.search(/[;:]/);
      const valueStart = line.indexOf(':', nameEnd);
      (inEvent ? event : calendar).set(line.slice(0, nameEnd), line.slice(valueStart + 1));
    }
  }
  return { calendar, event };
}

// 08:30 to 10:00 UTC on 5 January 2027; RFC 5545 §3.3.5 writes a UTC date-time as
// YYYYMMDD "T" HHMMSS "Z".
const startsAt = new Date(Date.UTC(2027, 0, 5, 8, 30));
const endsAt = new Date(Date.UTC(2027, 0, 5, 10, 0));
const uid = 'booking-0f4c2a9e-6a51-4d0b-9b3e-2f7d1c8a5e10@emberline.invalid';

function invitation(method: 'REQUEST' | 'CANCEL', sequence: number): string {
  return calendarInvitation({
    uid,
    sequence,
    method,
    startsAt,
    endsAt,
    summary: 'EMB-2027-014 microwave ablation',
    location: 'Interventional suite 2',
    organizer: { name: 'Nurse coordinator', email: 'coordinator@emberline.test' },
    attendees: [{ name: 'Proceduralist', email: 'proceduralist@emberline.test' }],
  });
}

beforeAll(async () => {
  testApp = await startTestApp({}, { mailCatcher: true });
  await resetToDemo(testApp.orm);
  relay = await MailCatcher.start({ port: 0, ...catcherSettings });
  relayPort = relay.port;
  mail = await MailService.start(testApp.orm, settings(relay.url), (message, error) =>
    testApp.logs.push(`${message} ${String(error ?? '')}`),
  );
}, 60_000);

afterAll(async () => {
  await mail?.stop();
  await relay?.close();
  await testApp?.close();
});

describe('queueMail', () => {
  it('delivers an invitation exactly once, with an .ics that reads as RFC 5545 says', async () => {
    const subject = 'Procedure booked: EMB-2027-014 microwave ablation';
    const id = await mail.queueMail({
      to: ['proceduralist@emberline.test'],
      subject,
      text: 'Case EMB-2027-014: microwave ablation on 5 January 2027 at 08:30 UTC.',
      ics: invitation('REQUEST', 0),
      reference: 'booking:0f4c2a9e-6a51-4d0b-9b3e-2f7d1c8a5e10',
    });
    const [message] = await waitFor(
      () => (withSubject(relay, subject).length ? withSubject(relay, subject) : null),
      'the invitation',
    );
    expect(message.to).toEqual(['proceduralist@emberline.test']);
    // The delivery id is the Message-ID (RFC 5322 §3.6.4), so a resend is recognisable.
    expect(message.messageId).toBe(`<${id}@emberline.invalid>`);
    const ics = icsOf(message);
    // nodemailer's `icalEvent` sends it twice: as the text/calendar alternative calendar
    // programs act on (with its METHOD), and as a named file for everyone else.
    expect(ics?.contentType).toBe('application/ics');
    const alternative = message.attachments.find((part) => part.contentType === 'text/calendar');
    expect(alternative?.content.equals(ics.content)).toBe(true);
    const { calendar, event } = icalendarProperties(ics.content.toString('utf8'));
    expect(calendar.get('METHOD')).toBe('REQUEST');
    expect(calendar.get('VERSION')).toBe('2.0');
    expect(event.get('UID')).toBe(uid);
    expect(event.get('SEQUENCE')).toBe('0');
    expect(event.get('DTSTART')).toBe('20270105T083000Z');
    expect(event.get('DTEND')).toBe('20270105T100000Z');

    await waitFor(async () => ((await delivery(id)).state === 'sent' ? true : null), 'sent');
    await pause(1500);
    expect(withSubject(relay, subject)).toHaveLength(1);
    const row = await delivery(id);
    expect(row).toMatchObject({ state: 'sent', attempts: 1, lastErrorCode: null });
    expect(await mail.deliveries('booking:0f4c2a9e-6a51-4d0b-9b3e-2f7d1c8a5e10')).toEqual([
      expect.objectContaining({ id, state: 'sent', recipients: ['proceduralist@emberline.test'] }),
    ]);
  });

  it('cancels with the same UID, the next SEQUENCE and STATUS CANCELLED (RFC 5546 §3.2.5)', async () => {
    const subject = 'Procedure cancelled: EMB-2027-014 microwave ablation';
    await mail.queueMail({
      to: ['proceduralist@emberline.test'],
      subject,
      text: 'Case EMB-2027-014: the microwave ablation on 5 January 2027 is cancelled.',
      ics: invitation('CANCEL', 1),
    });
    const [message] = await waitFor(
      () => (withSubject(relay, subject).length ? withSubject(relay, subject) : null),
      'the cancellation',
    );
    const ics = icsOf(message);
    const { calendar, event } = icalendarProperties(ics.content.toString('utf8'));
    expect(calendar.get('METHOD')).toBe('CANCEL');
    expect(event.get('UID')).toBe(uid);
    expect(event.get('SEQUENCE')).toBe('1');
    expect(event.get('STATUS')).toBe('CANCELLED');
    expect(event.get('DTSTART')).toBe('20270105T083000Z');
  });

  it('refuses a mail without a valid recipient or with a two-line subject', async () => {
    await expect(mail.queueMail({ to: [], subject: 'x', text: 'x' })).rejects.toMatchObject({
      status: 400,
    });
    await expect(
      mail.queueMail({ to: ['not an address'], subject: 'x', text: 'x' }),
    ).rejects.toMatchObject({ status: 400 });
    await expect(
      mail.queueMail({ to: ['a@emberline.test'], subject: 'x\r\nBcc: b@x.test', text: 'x' }),
    ).rejects.toMatchObject({ status: 400 });
  });

  it('retries while the relay is away and delivers once when it is back on the same port', async () => {
    await relay.close();
    const subject = 'Procedure booked: EMB-2027-015 radiofrequency ablation';
    const id = await mail.queueMail({
      to: ['coordinator@emberline.test'],
      subject,
      text: 'Case EMB-2027-015: radiofrequency ablation.',
    });
    const failed = await waitFor(async () => {
      const row = await delivery(id);
      return row.attempts >= 1 && row.lastErrorCode ? row : null;
    }, 'a failed attempt');
    expect(failed.state).toBe('queued');
    // nodemailer names a refused connection ESOCKET (ECONNECTION for a dropped greeting).
    expect(failed.lastErrorCode).toMatch(/^E(SOCKET|CONNECTION)$/);

    relay = await MailCatcher.start({ port: relayPort, ...catcherSettings });
    await waitFor(() => (withSubject(relay, subject).length ? true : null), 'the retried mail');
    await waitFor(async () => ((await delivery(id)).state === 'sent' ? true : null), 'sent');
    await pause(2500);
    expect(withSubject(relay, subject)).toHaveLength(1);
    const row = await delivery(id);
    expect(row.state).toBe('sent');
    expect(row.attempts).toBeGreaterThanOrEqual(2);
  }, 30_000);

  it('sends nothing when a job for a delivery already sent runs again', async () => {
    const subject = 'Procedure booked: EMB-2027-016 microwave ablation';
    const id = await mail.queueMail({ to: ['coordinator@emberline.test'], subject, text: 'x' });
    await waitFor(async () => ((await delivery(id)).state === 'sent' ? true : null), 'sent');
    // The same job data again under a new job id, as a retry after a lost acknowledgement.
    const boss = new PgBoss({ connectionString: inject('databaseUrl'), schema: 'pgboss', max: 1 });
    await boss.start();
    try {
      const again = await boss.send(mailQueueName, {
        deliveryId: id,
        to: ['coordinator@emberline.test'],
        subject,
        text: 'x',
      });
      if (!again) throw new Error('pg-boss took no job');
      await waitFor(async () => {
        const job = await boss.getJobById(mailQueueName, again, { includeArchive: true });
        return job?.state === 'completed' ? true : null;
      }, 'the repeated job');
    } finally {
      await boss.stop({ graceful: false, wait: true });
    }
    expect(withSubject(relay, subject)).toHaveLength(1);
    expect((await delivery(id)).attempts).toBe(1);
  });
});

describe('the demo catcher at start', () => {
  it('runs none when SMTP_URL names a relay or in production', async () => {
    const log = () => undefined;
    expect(await startDemoMailCatcher({ SMTP_URL: 'smtp://relay.example:25' }, log)).toEqual({
      catcher: null,
      url: null,
    });
    expect(await startDemoMailCatcher({ NODE_ENV: 'production' }, log)).toEqual({
      catcher: null,
      url: null,
    });
  });

  it('sends to the catcher already on the port when a second process starts', async () => {
    const logs: string[] = [];
    const started = await startDemoMailCatcher({ MAIL_CATCHER_PORT: String(relayPort) }, (m) =>
      logs.push(m),
    );
    expect(started).toEqual({ catcher: null, url: `smtp://127.0.0.1:${relayPort}` });
    expect(logs).toEqual([]);
  });
});

describe("the catcher's memory", () => {
  it('drops the oldest messages once the kept ones pass its byte bound', async () => {
    // Each message below is a little over 15 kB on the wire (its 15,000-byte text with the
    // encoding's line breaks and the headers): a 40 kB bound keeps two of three.
    const catcher = await MailCatcher.start({ ...mailCatcherLimits, port: 0, keepBytes: 40_000 });
    try {
      const transport = nodemailer.createTransport({ url: catcher.url, ignoreTLS: true });
      for (const subject of ['first', 'second', 'third']) {
        await transport.sendMail({
          from: 'no-reply@emberline.invalid',
          to: 'coordinator@emberline.test',
          subject,
          text: 'x'.repeat(15_000),
        });
      }
      await waitFor(() => (catcher.list().length >= 2 ? true : null), 'the messages');
      expect(catcher.list().map((message) => message.subject)).toEqual(['third', 'second']);
      const held = catcher.list().reduce((sum, message) => sum + message.raw.length, 0);
      expect(held).toBeLessThanOrEqual(40_000);
    } finally {
      await catcher.close();
    }
  });
});

describe('GET /api/dev/mail', () => {
  const subject = 'Checklist: EMB-2027-014';

  beforeAll(async () => {
    const transport = nodemailer.createTransport({
      url: catcherOfApp().url,
      ignoreTLS: true,
    });
    await transport.sendMail({
      from: 'no-reply@emberline.invalid',
      to: 'coordinator@emberline.test',
      subject,
      text: 'Case EMB-2027-014.',
      attachments: [
        { filename: 'note.txt', content: 'bytes of a note', contentType: 'text/plain' },
      ],
    });
    await waitFor(() => (catcherOfApp().list().length ? true : null), 'the message');
  });

  async function as(email: string | null): Promise<ApiClient> {
    const client = new ApiClient(testApp.app);
    if (email) expect((await client.signIn(email, demoPassword)).status).toBe(200);
    return client;
  }

  it.each([
    ['admin@emberline.test', 200],
    ['coordinator@emberline.test', 200],
    ['presenter@emberline.test', 403],
    ['member@emberline.test', 403],
    ['proceduralist@emberline.test', 403],
    [null, 401],
  ] as const)('%s → %i', async (email, status) => {
    const client = await as(email);
    const list = await client.get('/api/dev/mail');
    expect(list.status).toBe(status);
    const id = catcherOfApp().list()[0].id;
    const attachment = await client.get(`/api/dev/mail/${id}/attachments/0`);
    expect(attachment.status).toBe(status);
    if (status !== 200) return;
    expect(list.body[0]).toMatchObject({
      id,
      subject,
      to: ['coordinator@emberline.test'],
      attachments: [{ index: 0, filename: 'note.txt', contentType: 'text/plain', size: 15 }],
    });
    expect(list.body[0].text).toBeUndefined();
    expect(attachment.headers['content-type']).toMatch(/^text\/plain/);
    expect(attachment.text).toBe('bytes of a note');
    expect((await client.get(`/api/dev/mail/${id}/attachments/7`)).status).toBe(404);
  });

  it('writes an audit event for each read', async () => {
    const admin = await as('admin@emberline.test');
    await admin.get('/api/dev/mail');
    const audit = await admin.get('/api/admin/audit?action=dev-mail.list');
    expect(audit.status).toBe(200);
    expect(audit.body.total).toBeGreaterThanOrEqual(1);
  });

  it('is absent (404) when no catcher runs in the process', async () => {
    const without = await startTestApp();
    try {
      const client = new ApiClient(without.app);
      expect((await client.signIn('admin@emberline.test', demoPassword)).status).toBe(200);
      expect((await client.get('/api/dev/mail')).status).toBe(404);
    } finally {
      await without.close();
    }
  });
});
