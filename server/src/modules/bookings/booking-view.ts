import type { EntityManager } from '@mikro-orm/postgresql';
import type {
  BookingHistoryEntry,
  BookingSummary,
  BookingView,
  NotificationView,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import type { SignedInUser } from '../../common/request-context';
import { loadPanelInForce } from '../cases/lab-panel-in-force';
import { ImageSeries } from '../imaging/image-series.entity';
import type { MailService } from '../mail/mail.service';
import { User } from '../users/user.entity';
import { BookingEvent } from './booking-event.entity';
import { ProcedureBooking } from './booking.entity';
import { evaluateChecklist, type ChecklistEvidence } from './checklist';
import { thresholdsInForce } from './checklist-thresholds';

type Person = { id: string; displayName: string };

export function isLive(booking: ProcedureBooking): boolean {
  return booking.state === 'booked' || booking.state === 'confirmed';
}

export function toBookingSummary(booking: ProcedureBooking): BookingSummary {
  const operator = booking.operator?.getEntity() ?? null;
  return {
    id: booking.id,
    kind: booking.kind,
    state: booking.state,
    startsAt: booking.startsAt.toISOString(),
    durationMin: booking.durationMin,
    room: booking.room,
    operator: operator ? { id: operator.id, displayName: operator.displayName } : null,
  };
}

/** The case's panel in force (`loadPanelInForce`) and its newest series (by upload). */
export async function checklistEvidence(
  em: EntityManager,
  caseId: string,
): Promise<ChecklistEvidence> {
  const panel = await loadPanelInForce(em, caseId);
  const [series] = await em.find(
    ImageSeries,
    { clinicalCase: caseId },
    { orderBy: { createdAt: 'desc' }, limit: 1, fields: ['id', 'createdAt'] },
  );
  return {
    panel: panel
      ? { takenAt: panel.takenAt, inr: panel.inr, plateletsE9L: panel.plateletsE9L }
      : null,
    seriesUploadedAt: series?.createdAt ?? null,
  };
}

/** Display names of the users a checklist's marks name. */
async function peopleOf(em: EntityManager, ids: string[]): Promise<Map<string, Person>> {
  if (!ids.length) return new Map();
  const users = await em.find(User, { id: { $in: [...new Set(ids)] } });
  return new Map(users.map((user) => [user.id, { id: user.id, displayName: user.displayName }]));
}

function markUserIds(booking: ProcedureBooking): string[] {
  return Object.values(booking.checklist).flatMap((mark) => [
    ...(mark?.checkedById ? [mark.checkedById] : []),
    ...(mark?.override ? [mark.override.byId] : []),
  ]);
}

/** The checklist of a procedure booking as it stands now (null for a follow-up). */
export async function checklistOf(em: EntityManager, booking: ProcedureBooking) {
  if (booking.kind !== 'procedure') return null;
  return evaluateChecklist(
    booking.startsAt,
    booking.checklist,
    await checklistEvidence(em, booking.clinicalCase.id),
    await thresholdsInForce(em),
    await peopleOf(em, markUserIds(booking)),
  );
}

/** A recipient's place on the care team, never the address. */
function roleOnTeam(email: string, team: Map<string, string>): string {
  return team.get(email.toLowerCase()) ?? 'care team';
}

/**
 * The API's view of a booking for `user`. `booking` comes with its case, operator and bookedBy
 * loaded. Notifications come from the mail module's deliveries for `booking:<id>`.
 */
export async function toBookingView(
  em: EntityManager,
  user: SignedInUser,
  booking: ProcedureBooking,
  mail: MailService | null,
): Promise<BookingView> {
  const clinicalCase = booking.clinicalCase.getEntity();
  const presenter = await em.findOneOrFail(User, clinicalCase.presenter.id);
  const operator = booking.operator ? await em.findOneOrFail(User, booking.operator.id) : null;
  const bookedBy = await em.findOneOrFail(User, booking.bookedBy.id);
  const events = await em.find(
    BookingEvent,
    { booking: booking.id },
    { populate: ['by'], orderBy: { at: 'asc', createdAt: 'asc' } },
  );
  const history = events.map((event): BookingHistoryEntry => {
    const by = event.by.getEntity();
    return {
      action: event.action,
      at: event.at.toISOString(),
      by: { id: by.id, displayName: by.displayName },
      reason: event.reason,
      changes: event.changes,
    };
  });
  const team = new Map<string, string>([
    [presenter.email, 'presenter'],
    [bookedBy.email, 'coordinator'],
    ...(operator ? ([[operator.email, 'operator']] as [string, string][]) : []),
  ]);
  const notifications: NotificationView[] = mail
    ? (await mail.deliveries(`booking:${booking.id}`)).map((delivery) => ({
        id: delivery.id,
        to: [...new Set(delivery.recipients.map((address) => roleOnTeam(address, team)))],
        subject: delivery.subject,
        state: delivery.state,
        attempts: delivery.attempts,
        queuedAt: delivery.createdAt,
        sentAt: delivery.sentAt,
      }))
    : [];
  const isCoordinator = hasRole(user, 'nurse-coordinator');
  const isOperator = operator?.id === user.id;
  const isOpen = booking.state === 'booked';
  const isProcedure = booking.kind === 'procedure';
  return {
    ...toBookingSummary(booking),
    operator: operator ? { id: operator.id, displayName: operator.displayName } : null,
    caseId: clinicalCase.id,
    anaesthesia: booking.anaesthesia,
    modality: booking.modality,
    applicators: booking.applicators,
    notes: booking.notes,
    sequence: booking.sequence,
    bookedBy: { id: bookedBy.id, displayName: bookedBy.displayName },
    checklist: await checklistOf(em, booking),
    history,
    notifications,
    isMailEnabled: mail !== null,
    permissions: {
      canEdit: isCoordinator && isLive(booking),
      canCheck: (isCoordinator || isOperator) && isOpen && isProcedure,
      canConfirm: isCoordinator && isOpen && isProcedure,
      canMarkDone: isOperator && booking.state === 'confirmed' && isProcedure,
    },
  };
}

/** The booking as `toBookingView` shows it, read afresh (after a write). */
export async function loadBookingView(
  em: EntityManager,
  user: SignedInUser,
  bookingId: string,
  mail: MailService | null,
): Promise<BookingView> {
  const fork = em.fork();
  const booking = await fork.findOneOrFail(ProcedureBooking, bookingId, {
    populate: ['clinicalCase', 'operator', 'bookedBy'],
  });
  return toBookingView(fork, user, booking, mail);
}
