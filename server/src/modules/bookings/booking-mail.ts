/**
 * The wording of the care team's e-mails about a booking. The rule of the mail module holds:
 * no patient-identifying value, only the case code, the procedure, the time and the room (and
 * staff names). Times are written in the hospital's time zone (`HOSPITAL_TIME_ZONE`).
 */
import { anaesthesiaLabels, followUpModalityLabels, treatmentLabels } from '@emberline/shared';
import type { InvitationPerson } from '../mail/invitation';
import { calendarInvitation } from '../mail/invitation';
import type { MailMessage } from '../mail/mail.service';
import type { ProcedureBooking } from './booking.entity';

export type BookingMailKind = 'booked' | 'rebooked' | 'cancelled';

export interface BookingMailFacts {
  booking: ProcedureBooking;
  caseCode: string;
  /** The treatment's label for a procedure, the modality's for a follow-up. */
  procedure: string;
  operatorName: string | null;
  organizer: InvitationPerson;
  attendees: InvitationPerson[];
  timeZone: string;
}

/** "Tue, 5 Jan 2027, 08:30–10:00 (UTC)". */
export function timeSpan(startsAt: Date, endsAt: Date, timeZone: string): string {
  const date = new Intl.DateTimeFormat('en-GB', {
    timeZone,
    weekday: 'short',
    day: 'numeric',
    month: 'short',
    year: 'numeric',
  }).format(startsAt);
  const time = new Intl.DateTimeFormat('en-GB', {
    timeZone,
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
  });
  return `${date}, ${time.format(startsAt)}–${time.format(endsAt)} (${timeZone})`;
}

export function procedureName(booking: ProcedureBooking, outcome: string | null): string {
  if (booking.kind === 'follow-up-imaging') {
    return booking.modality ? followUpModalityLabels[booking.modality] : 'imaging';
  }
  return outcome && outcome in treatmentLabels
    ? treatmentLabels[outcome as keyof typeof treatmentLabels]
    : 'procedure';
}

/** One mail with its invitation: REQUEST for a booking or rebooking, CANCEL for a cancellation. */
export function bookingMail(kind: BookingMailKind, facts: BookingMailFacts): MailMessage {
  const { booking } = facts;
  const what = booking.kind === 'procedure' ? 'Procedure' : 'Follow-up imaging';
  const verb = { booked: 'booked', rebooked: 'changed', cancelled: 'cancelled' }[kind];
  const summary = `${facts.caseCode} ${facts.procedure}`;
  const when = timeSpan(booking.startsAt, booking.endsAt, facts.timeZone);
  const lines = [
    `Case ${facts.caseCode}: ${facts.procedure}.`,
    kind === 'cancelled' ? `Cancelled: ${when}, room ${booking.room}.` : `When: ${when}.`,
    ...(kind === 'cancelled' ? [] : [`Room: ${booking.room}.`]),
    ...(facts.operatorName && kind !== 'cancelled' ? [`Operator: ${facts.operatorName}.`] : []),
    ...(booking.anaesthesia && kind !== 'cancelled'
      ? [`Anaesthesia: ${anaesthesiaLabels[booking.anaesthesia]}.`]
      : []),
    '',
    'Open the case in Emberline for the details. This message carries no patient-identifying data.',
  ];
  return {
    to: [...new Set([facts.organizer, ...facts.attendees].map((person) => person.email))],
    subject: `${what} ${verb}: ${summary}`,
    text: lines.join('\n'),
    reference: `booking:${booking.id}`,
    ics: calendarInvitation({
      uid: `${booking.id}@emberline.invalid`,
      sequence: booking.sequence,
      method: kind === 'cancelled' ? 'CANCEL' : 'REQUEST',
      startsAt: booking.startsAt,
      endsAt: booking.endsAt,
      summary,
      location: booking.room,
      organizer: facts.organizer,
      attendees: facts.attendees,
    }),
  };
}

/** The coordinators' note that a case's follow-up imaging is due (no invitation). */
export function followUpDueMail(
  caseCode: string,
  dueAt: Date,
  to: string[],
  caseId: string,
  timeZone: string,
): MailMessage {
  const date = new Intl.DateTimeFormat('en-GB', {
    timeZone,
    day: 'numeric',
    month: 'short',
    year: 'numeric',
  }).format(dueAt);
  return {
    to,
    subject: `Follow-up imaging due: ${caseCode}`,
    text: [
      `Case ${caseCode}: the follow-up imaging after the procedure fell due on ${date} (${timeZone}).`,
      'It is in the booking queue. This message carries no patient-identifying data.',
    ].join('\n'),
    reference: `follow-up:${caseId}`,
  };
}
