/**
 * Calendar invitations as iCalendar text (RFC 5545) with the scheduling methods of iTIP
 * (RFC 5546): REQUEST to invite or update, CANCEL to withdraw. The caller owns the UID (stable
 * for one appointment, e.g. derived from a booking id) and raises SEQUENCE with every change,
 * so a calendar replaces its copy instead of adding another.
 */
import ical, { ICalAttendeeRole, ICalCalendarMethod, ICalEventStatus } from 'ical-generator';

export interface InvitationPerson {
  name: string;
  email: string;
}

export interface InvitationInput {
  uid: string;
  sequence: number;
  method: 'REQUEST' | 'CANCEL';
  startsAt: Date;
  endsAt: Date;
  /** Case code and procedure only: never a patient-identifying value (module README). */
  summary: string;
  location: string;
  organizer: InvitationPerson;
  attendees: InvitationPerson[];
}

export function calendarInvitation(input: InvitationInput): string {
  if (!(input.endsAt.getTime() > input.startsAt.getTime())) {
    throw new Error('An invitation must end after it starts');
  }
  if (!Number.isInteger(input.sequence) || input.sequence < 0) {
    throw new Error('An invitation sequence is a whole number from 0');
  }
  const calendar = ical({
    prodId: { company: 'Emberline', product: 'Emberline', language: 'EN' },
    method: input.method === 'CANCEL' ? ICalCalendarMethod.CANCEL : ICalCalendarMethod.REQUEST,
  });
  // No time zone given: ical-generator writes DTSTART/DTEND as UTC date-times ("…Z",
  // RFC 5545 §3.3.5 form #2), which every calendar reads the same way.
  calendar.createEvent({
    id: input.uid,
    sequence: input.sequence,
    start: input.startsAt,
    end: input.endsAt,
    stamp: new Date(),
    summary: input.summary,
    location: input.location,
    organizer: { name: input.organizer.name, email: input.organizer.email },
    attendees: input.attendees.map((attendee) => ({
      name: attendee.name,
      email: attendee.email,
      role: ICalAttendeeRole.REQ,
      rsvp: input.method === 'REQUEST',
    })),
    status: input.method === 'CANCEL' ? ICalEventStatus.CANCELLED : ICalEventStatus.CONFIRMED,
  });
  return calendar.toString();
}
