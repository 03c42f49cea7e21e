import type { EntityManager } from '@mikro-orm/postgresql';
import { checklistItemKeys, type BookingView, type ChecklistItemKey } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import type { MailService } from '../mail/mail.service';
import { visibleBooking } from './booking-access';
import { appendBookingEvent } from './booking-event.entity';
import { checklistOf, loadBookingView } from './booking-view';
import type { ProcedureBooking } from './booking.entity';
import { isManualItem } from './checklist';

/**
 * The pre-procedure checklist of a booked procedure (module README, "The checklist"): manual
 * items ticked, failed automatic items overridden with a reason, the booking confirmed once
 * every item is met or overridden. Coordinators of the board do all three; the booking's
 * operator ticks and overrides.
 */
export class ChecklistService {
  constructor(
    private readonly em: EntityManager,
    private readonly mail: MailService | null,
  ) {}

  /** A manual item ticked or unticked, by a coordinator of the board or the booking's operator. */
  async tick(
    user: SignedInUser,
    actor: Actor,
    bookingId: string,
    key: string,
    isMet: boolean,
  ): Promise<BookingView> {
    const booking = await this.checkableBooking(user, bookingId, key);
    const itemKey = key as ChecklistItemKey;
    if (!isManualItem(itemKey)) {
      throw new ValidationError(`key: ${key} is checked automatically against the case’s record.`, [
        { path: 'key', message: 'This item is checked automatically; override it instead.' },
      ]);
    }
    booking.checklist = {
      ...booking.checklist,
      [itemKey]: { isMet, checkedById: user.id, checkedAt: new Date().toISOString() },
    };
    recordAudit(this.em, actor, {
      action: 'checklist.tick',
      entityType: 'case',
      entityId: booking.clinicalCase.id,
      detail: { bookingId: booking.id, key, isMet },
    });
    await this.em.flush();
    return loadBookingView(this.em, user, booking.id, this.mail);
  }

  /** A failed automatic item overridden with its reason, kept on the item and in the history. */
  async override(
    user: SignedInUser,
    actor: Actor,
    bookingId: string,
    key: string,
    reason: string,
  ): Promise<BookingView> {
    const booking = await this.checkableBooking(user, bookingId, key);
    const itemKey = key as ChecklistItemKey;
    if (isManualItem(itemKey)) {
      throw new ValidationError(`key: ${key} is ticked, not overridden.`, [
        { path: 'key', message: 'A manual item is ticked by the person who checked it.' },
      ]);
    }
    const item = (await checklistOf(this.em, booking))?.items.find((entry) => entry.key === key);
    if (!item || item.state === 'met') {
      throw new ConflictError(`${item?.label ?? key} is met: there is nothing to override.`);
    }
    const at = new Date();
    booking.checklist = {
      ...booking.checklist,
      [itemKey]: {
        ...booking.checklist[itemKey],
        override: { reason, byId: user.id, at: at.toISOString() },
      },
    };
    appendBookingEvent(this.em, booking.id, user.id, 'override', reason, [
      { field: key, before: item.finding, after: 'overridden' },
    ]);
    recordAudit(this.em, actor, {
      action: 'checklist.override',
      entityType: 'case',
      entityId: booking.clinicalCase.id,
      detail: { bookingId: booking.id, key, reason },
    });
    await this.em.flush();
    return loadBookingView(this.em, user, booking.id, this.mail);
  }

  /** Confirms a booked procedure whose every item is met or overridden (409 listing the rest). */
  async confirm(user: SignedInUser, actor: Actor, bookingId: string): Promise<BookingView> {
    const booking = await visibleBooking(this.em, user, bookingId);
    if (!hasRole(user, 'nurse-coordinator')) {
      throw new ForbiddenError('Only a nurse coordinator of the case’s board confirms a booking.');
    }
    if (booking.kind !== 'procedure') {
      throw new ConflictError('A follow-up imaging booking has no checklist to confirm.');
    }
    if (booking.state !== 'booked') {
      throw new ConflictError(
        `Only a booked procedure is confirmed; this one is ${booking.state}.`,
      );
    }
    const checklist = await checklistOf(this.em, booking);
    const failing = checklist?.items.filter(
      (item) => item.state !== 'met' && item.state !== 'overridden',
    );
    if (failing?.length) {
      throw new ConflictError(
        `The checklist is not complete: ${failing
          .map((item) => `${item.label} (${item.state === 'open' ? 'not ticked' : item.finding})`)
          .join('; ')}. Tick the items, or override a failed one with its reason.`,
      );
    }
    booking.state = 'confirmed';
    appendBookingEvent(this.em, booking.id, user.id, 'confirmed');
    recordAudit(this.em, actor, {
      action: 'booking.confirm',
      entityType: 'case',
      entityId: booking.clinicalCase.id,
      detail: { bookingId: booking.id },
    });
    await this.em.flush();
    return loadBookingView(this.em, user, booking.id, this.mail);
  }

  private async checkableBooking(
    user: SignedInUser,
    bookingId: string,
    key: string,
  ): Promise<ProcedureBooking> {
    const booking = await visibleBooking(this.em, user, bookingId);
    if (!(checklistItemKeys as readonly string[]).includes(key)) {
      throw new NotFoundError('The checklist item');
    }
    const isOperator = booking.operator?.id === user.id;
    if (!hasRole(user, 'nurse-coordinator') && !isOperator) {
      throw new ForbiddenError(
        'Only a nurse coordinator of the case’s board or the booking’s operator works the checklist.',
      );
    }
    if (booking.kind !== 'procedure') {
      throw new ConflictError('A follow-up imaging booking has no checklist.');
    }
    if (booking.state !== 'booked') {
      throw new ConflictError(
        `The checklist changes while the procedure is booked; this one is ${booking.state}.`,
      );
    }
    return booking;
  }
}
