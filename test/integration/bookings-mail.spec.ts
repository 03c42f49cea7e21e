/**
 * The care team's e-mails about a booking, end to end through the local SMTP catcher (a real
 * SMTP server, RFC 5321): one message per change to the operator, the presenter and the
 * coordinator, its invitation read back with ical.js (an iCalendar parser independent of the
 * generator, RFC 5545), the UID kept and SEQUENCE raised across a rebooking (RFC 5546 §2.1.4),
 * METHOD:CANCEL for a cancellation (RFC 5546 §3.2.5), no patient-identifying value anywhere, and
 * a relay that is away retried until it takes the message exactly once.
 */
import ICAL from 'ical.js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BookingView } from '@emberline/shared';
import {
  MailCatcher,
  mailCatcherLimits,
  type CaughtMessage,
} from '../../server/src/modules/mail/mail-catcher';
import { MailDelivery } from '../../server/src/modules/mail/mail-delivery.entity';
import { startTestApp, type ApiClient, type TestApp } from '../support/test-app';
import { resetToDemo, type DemoIds } from '../support/demo';
import { addUser, decidedCase, signedIn } from './booking-fixtures';
import { boardMembers } from './decision-fixtures';

let testApp: TestApp;
let ids: DemoIds;
/** The relay the mail service sends to; closed and started again on the same port below. */
let relay: MailCatcher;
let relayPort: number;
let coordinator: ApiClient;
let idOf: (email: string) => string;
let firstCase: string;
let secondCase: string;
let thirdCase: string;

const catcherSettings = mailCatcherLimits;
const team = [
  'coordinator@emberline.test',
  'presenter@emberline.test',
  'proceduralist@emberline.test',
].sort();

// 09:00–10:30 UTC on Tuesday 12 January 2027: 10:00–11:30 in Oslo, which keeps UTC+1 in winter
// (IANA time zone database, Europe/Oslo; common practice).
const startsAt = new Date(Date.UTC(2027, 0, 12, 9, 0));
const endsAt = new Date(Date.UTC(2027, 0, 12, 10, 30));

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

function withSubject(subject: string): CaughtMessage[] {
  return relay.list().filter((message) => message.subject === subject);
}

async function onlyMessage(subject: string): Promise<CaughtMessage> {
  await waitFor(() => (withSubject(subject).length ? true : null), subject);
  // Long enough for a second delivery of the same change to show (the worker polls at 0.5 s).
  await pause(1500);
  const messages = withSubject(subject);
  expect(messages).toHaveLength(1);
  return messages[0];
}

/** The invitation read by ical.js: the calendar's METHOD and the event's properties. */
function invitation(message: CaughtMessage) {
  const file = message.attachments.find((attachment) => attachment.filename === 'invitation.ics');
  if (!file) throw new Error('the message has no invitation.ics');
  const calendar = new ICAL.Component(ICAL.parse(file.content.toString('utf8')));
  const vevent = calendar.getFirstSubcomponent('vevent');
  if (!vevent) throw new Error('the invitation has no VEVENT');
  const event = new ICAL.Event(vevent);
  return {
    method: calendar.getFirstPropertyValue('method'),
    uid: event.uid,
    sequence: event.sequence,
    startsAt: event.startDate.toJSDate(),
    endsAt: event.endDate.toJSDate(),
    zone: event.startDate.zone?.tzid,
    status: vevent.getFirstPropertyValue('status'),
    summary: event.summary,
    location: event.location,
  };
}

/** Every value of the case a mail must never carry (its record as the presenter entered it). */
function assertNothingIdentifying(message: CaughtMessage): void {
  const everything = [
    message.raw.toString('latin1'),
    message.subject,
    message.text,
    ...message.attachments.map((attachment) => attachment.content.toString('utf8')),
  ].join('\n');
  for (const value of [/\b1958\b/, /\bfemale\b/i, /hepatocellular/i, /year of birth/i]) {
    expect(everything).not.toMatch(value);
  }
}

const book = (caseId: string, overrides: Record<string, unknown> = {}) =>
  coordinator.post(`/api/cases/${caseId}/booking`, {
    startsAt: startsAt.toISOString(),
    durationMin: 90,
    room: 'Interventional suite 1',
    operatorId: idOf('proceduralist@emberline.test'),
    anaesthesia: 'sedation',
    ...overrides,
  });

beforeAll(async () => {
  relay = await MailCatcher.start({ port: 0, ...catcherSettings });
  relayPort = relay.port;
  testApp = await startTestApp(
    { hospitalTimeZone: 'Europe/Oslo' },
    { mail: { smtpUrl: relay.url } },
  );
  ids = await resetToDemo(testApp.orm);
  coordinator = await signedIn(testApp, 'coordinator@emberline.test');
  const memberOf = await boardMembers(coordinator, ids.northBoard);
  idOf = (email) => memberOf(email).userId;
  // yearOfBirth 1958, female, hepatocellular carcinoma (booking-fixtures.ts).
  firstCase = await decidedCase(testApp.orm, {
    caseCode: 'NLB-2027-301',
    boardId: ids.northBoard,
    outcome: 'ablation-rf',
  });
  secondCase = await decidedCase(testApp.orm, {
    caseCode: 'NLB-2027-302',
    boardId: ids.northBoard,
    outcome: 'tace',
  });
  thirdCase = await decidedCase(testApp.orm, {
    caseCode: 'NLB-2027-303',
    boardId: ids.northBoard,
    outcome: 'ablation-mw',
  });
}, 60_000);

afterAll(async () => {
  await testApp?.close();
  await relay?.close();
});

describe('a booking’s mails', () => {
  let booking: BookingView;
  let uid: string;

  it('sends one message to the care team, with a REQUEST invitation ical.js reads', async () => {
    const response = await book(firstCase);
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    booking = response.body as BookingView;
    const message = await onlyMessage('Procedure booked: NLB-2027-301 Radiofrequency ablation');
    expect([...message.to].sort()).toEqual(team);
    expect(message.text).toContain('Tue, 12 Jan 2027, 10:00–11:30 (Europe/Oslo)');
    expect(message.text).toContain('Interventional suite 1');
    const ics = invitation(message);
    expect(ics).toMatchObject({
      method: 'REQUEST',
      sequence: 0,
      zone: 'UTC',
      summary: 'NLB-2027-301 Radiofrequency ablation',
      location: 'Interventional suite 1',
    });
    expect(ics.startsAt.toISOString()).toBe(startsAt.toISOString());
    expect(ics.endsAt.toISOString()).toBe(endsAt.toISOString());
    expect(ics.uid).toBe(`${booking.id}@emberline.invalid`);
    uid = ics.uid;
    assertNothingIdentifying(message);
  });

  it('lists the notification on the booking with its delivery state', async () => {
    const view = await waitFor(async () => {
      const response = await coordinator.get(`/api/cases/${firstCase}/logistics`);
      const procedure = (response.body as { procedure: BookingView }).procedure;
      return procedure.notifications[0]?.state === 'sent' ? procedure : null;
    }, 'the sent state');
    expect(view.notifications).toEqual([
      expect.objectContaining({
        subject: 'Procedure booked: NLB-2027-301 Radiofrequency ablation',
        state: 'sent',
        attempts: 1,
        to: ['coordinator', 'operator', 'presenter'].sort(),
      }),
    ]);
    expect(JSON.stringify(view.notifications)).not.toContain('@');
  });

  it('keeps the UID and raises SEQUENCE on a rebooking', async () => {
    const later = new Date(startsAt.getTime() + 60 * 60_000);
    const response = await coordinator.patch(`/api/cases/${firstCase}/booking`, {
      startsAt: later.toISOString(),
      reason: 'The suite opens an hour later that day.',
    });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    const message = await onlyMessage('Procedure changed: NLB-2027-301 Radiofrequency ablation');
    expect([...message.to].sort()).toEqual(team);
    const ics = invitation(message);
    expect(ics).toMatchObject({ method: 'REQUEST', uid, sequence: 1 });
    expect(ics.startsAt.toISOString()).toBe(later.toISOString());
    assertNothingIdentifying(message);
  });

  it('sends METHOD:CANCEL with the same UID and the next SEQUENCE on a cancellation', async () => {
    const response = await coordinator.send('delete', `/api/cases/${firstCase}/booking`, {
      reason: 'The board asked to rediscuss the case.',
    });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    const message = await onlyMessage('Procedure cancelled: NLB-2027-301 Radiofrequency ablation');
    expect(invitation(message)).toMatchObject({
      method: 'CANCEL',
      uid,
      sequence: 2,
      status: 'CANCELLED',
    });
    expect(message.text).not.toContain('The board asked');
    assertNothingIdentifying(message);
  });
});

describe('a change of operator', () => {
  it('sends the new team the update and the previous operator the cancellation, one UID', async () => {
    const secondOperatorId = await addUser(testApp.orm, {
      email: 'second.operator@emberline.test',
      displayName: 'Dr Aino Virtanen',
      roles: ['proceduralist'],
      boardId: ids.northBoard,
      specialty: 'interventional-radiology',
    });
    const booked = await book(thirdCase, { room: 'Interventional suite 4' });
    expect(booked.status, JSON.stringify(booked.body)).toBe(201);
    const bookingId = (booked.body as BookingView).id;
    await onlyMessage('Procedure booked: NLB-2027-303 Microwave ablation');
    const changed = await coordinator.patch(`/api/cases/${thirdCase}/booking`, {
      operatorId: secondOperatorId,
      reason: 'Dr Tanaka is on leave that week.',
    });
    expect(changed.status, JSON.stringify(changed.body)).toBe(200);
    // The history names the operators by their names, not their ids.
    expect((changed.body as BookingView).history[1]?.changes).toEqual([
      { field: 'operator', before: 'Dr Mei Tanaka', after: expect.any(String) },
    ]);
    const update = await onlyMessage('Procedure changed: NLB-2027-303 Microwave ablation');
    expect([...update.to].sort()).toEqual([
      'coordinator@emberline.test',
      'presenter@emberline.test',
      'second.operator@emberline.test',
    ]);
    const cancellation = await onlyMessage('Procedure cancelled: NLB-2027-303 Microwave ablation');
    expect(cancellation.to).toEqual(['proceduralist@emberline.test']);
    expect(invitation(update)).toMatchObject({
      method: 'REQUEST',
      uid: `${bookingId}@emberline.invalid`,
      sequence: 1,
    });
    expect(invitation(cancellation)).toMatchObject({
      method: 'CANCEL',
      uid: `${bookingId}@emberline.invalid`,
      sequence: 1,
    });
  });
});

describe('a relay that is away', () => {
  it('is retried, and the message arrives exactly once when it is back', async () => {
    await relay.close();
    const response = await book(secondCase, { room: 'Angiography 1' });
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    const bookingId = (response.body as BookingView).id;
    const failed = await waitFor(async () => {
      const row = await testApp.orm.em
        .fork()
        .findOne(MailDelivery, { reference: `booking:${bookingId}` });
      return row && row.attempts >= 1 && row.lastErrorCode ? row : null;
    }, 'a failed attempt');
    expect(failed.state).toBe('queued');

    relay = await MailCatcher.start({ port: relayPort, ...catcherSettings });
    const message = await onlyMessage(
      'Procedure booked: NLB-2027-302 Transarterial chemoembolisation (TACE)',
    );
    expect(invitation(message).uid).toBe(`${bookingId}@emberline.invalid`);
    await waitFor(async () => {
      const row = await testApp.orm.em
        .fork()
        .findOne(MailDelivery, { reference: `booking:${bookingId}` });
      return row?.state === 'sent' ? row : null;
    }, 'sent');
    await pause(2000);
    expect(
      withSubject('Procedure booked: NLB-2027-302 Transarterial chemoembolisation (TACE)'),
    ).toHaveLength(1);
  }, 40_000);
});
