import { LockMode } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import {
  bookableTreatments,
  type BookingKind,
  type BookingView,
  type CancelBooking,
  type CreateBooking,
  type CreateFollowUp,
  type UpdateBooking,
} from '@emberline/shared';
import { ConflictError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { Assessment } from '../assessments/assessment.entity';
import { toAssessmentView } from '../assessments/assessment.service';
import { BoardMembership } from '../boards/board-membership.entity';
import { ClinicalCase } from '../cases/case.entity';
import { Decision } from '../decisions/decision.entity';
import type { MailService } from '../mail/mail.service';
import { ApplicatorProfile } from '../plans/applicator-profile.entity';
import { NeedlePlan } from '../plans/needle-plan.entity';
import { User } from '../users/user.entity';
import { caseForCoordinator, maySeeCase } from './booking-access';
import { appendBookingEvent } from './booking-event.entity';
import { bookingMail, procedureName, timeSpan, type BookingMailKind } from './booking-mail';
import { loadBookingView } from './booking-view';
import { ProcedureBooking, roomKeyOf, type BookedApplicator } from './booking.entity';

/**
 * One key for every booking write: the clash check and the insert or change happen under this
 * transaction-scoped PostgreSQL advisory lock, so two processes booking the same room or operator
 * at once are serialised (the second sees the first's row and is told 409).
 */
const bookingCalendarLock = 7_310_525_001;

/** Bookings last at most 12 hours (the contract), so an overlap starts no earlier than that. */
const longestBookingMs = 720 * 60_000;

export interface BookingServiceOptions {
  mail: MailService | null;
  timeZone: string;
  log: (message: string, error?: unknown) => void;
}

/**
 * Procedure and follow-up bookings (module README; the checklist is `checklist.service.ts`).
 * Writes take the booking lock, then the case's row; mail goes out after the commit, so a relay
 * that is away never holds a booking back.
 */
export class BookingService {
  constructor(
    private readonly em: EntityManager,
    private readonly options: BookingServiceOptions,
  ) {}

  // ------------------------------------------------------------ procedure

  async create(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: CreateBooking,
  ): Promise<BookingView> {
    const found = await caseForCoordinator(this.em, user, caseId, 'books the procedure');
    const decision = await this.em.findOne(Decision, { clinicalCase: found.id });
    this.assertBookable(found, decision);
    await this.assertOperator(found.board.id, body.operatorId);
    const applicators = await this.applicatorsOf(decision);
    const startsAt = new Date(body.startsAt);
    const bookingId = await this.em.transactional(async (em) => {
      await this.lockCalendar(em);
      const locked = await this.lockCase(em, found.id);
      this.assertBookable(locked, decision);
      if (await this.liveBooking(em, found.id, 'procedure')) {
        throw new ConflictError('The case has a live procedure booking: rebook or cancel it.');
      }
      await this.assertNoClash(em, user, {
        startsAt,
        durationMin: body.durationMin,
        room: body.room,
        operatorId: body.operatorId,
        excludeId: null,
      });
      const booking = new ProcedureBooking({
        clinicalCase: em.getReference(ClinicalCase, found.id, { wrapped: true }),
        kind: 'procedure',
        startsAt,
        durationMin: body.durationMin,
        room: body.room,
        bookedBy: em.getReference(User, user.id, { wrapped: true }),
      });
      booking.operator = em.getReference(User, body.operatorId, { wrapped: true });
      booking.anaesthesia = body.anaesthesia;
      booking.notes = body.notes || null;
      booking.applicators = applicators;
      em.persist(booking);
      appendBookingEvent(em, booking.id, user.id, 'booked');
      locked.status = 'booked';
      recordAudit(em, actor, {
        action: 'booking.create',
        entityType: 'case',
        entityId: found.id,
        detail: { bookingId: booking.id, kind: 'procedure', operatorId: body.operatorId },
      });
      return booking.id;
    });
    await this.notify(bookingId, 'booked');
    return this.view(user, bookingId);
  }

  async update(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: UpdateBooking,
  ): Promise<BookingView> {
    const found = await caseForCoordinator(this.em, user, caseId, 'rebooks the procedure');
    if (body.operatorId) await this.assertOperator(found.board.id, body.operatorId);
    let previousOperatorId: string | null = null;
    const bookingId = await this.em.transactional(async (em) => {
      await this.lockCalendar(em);
      await this.lockCase(em, found.id);
      const booking = await this.liveBooking(em, found.id, 'procedure');
      if (!booking) throw new NotFoundError('The live procedure booking');
      previousOperatorId = booking.operator?.id ?? null;
      const before = describe(booking);
      const startsAt = body.startsAt ? new Date(body.startsAt) : booking.startsAt;
      const durationMin = body.durationMin ?? booking.durationMin;
      const room = body.room ?? booking.room;
      const operatorId = body.operatorId ?? booking.operator?.id ?? null;
      await this.assertNoClash(em, user, {
        startsAt,
        durationMin,
        room,
        operatorId,
        excludeId: booking.id,
      });
      booking.startsAt = startsAt;
      booking.durationMin = durationMin;
      booking.room = room;
      booking.roomKey = roomKeyOf(room);
      if (operatorId) booking.operator = em.getReference(User, operatorId, { wrapped: true });
      if (body.anaesthesia) booking.anaesthesia = body.anaesthesia;
      if (body.notes !== undefined) booking.notes = body.notes || null;
      const after = describe(booking);
      const changes = (Object.keys(after) as (keyof typeof after)[])
        .filter((field) => before[field] !== after[field])
        .map((field) => ({ field, before: before[field], after: after[field] }));
      if (!changes.length) throw new ConflictError('Nothing in the booking changes.');
      // The history names the operators, not their ids.
      const operatorChange = changes.find((change) => change.field === 'operatorId');
      if (operatorChange) {
        const ids = [operatorChange.before, operatorChange.after].filter(
          (id): id is string => id !== null,
        );
        const names = new Map(
          (await em.find(User, { id: { $in: ids } })).map((user) => [user.id, user.displayName]),
        );
        operatorChange.field = 'operator';
        operatorChange.before = operatorChange.before && (names.get(operatorChange.before) ?? null);
        operatorChange.after = operatorChange.after && (names.get(operatorChange.after) ?? null);
      }
      booking.sequence += 1;
      // A confirmed booking that changes is confirmed again: its checklist reads the new start.
      const wasConfirmed = booking.state === 'confirmed';
      booking.state = 'booked';
      if (wasConfirmed) changes.push({ field: 'state', before: 'confirmed', after: 'booked' });
      appendBookingEvent(em, booking.id, user.id, 'rebooked', body.reason, changes);
      recordAudit(em, actor, {
        action: 'booking.update',
        entityType: 'case',
        entityId: found.id,
        detail: { bookingId: booking.id, fields: changes.map((change) => change.field) },
      });
      return booking.id;
    });
    await this.notify(bookingId, 'rebooked', previousOperatorId);
    return this.view(user, bookingId);
  }

  /** Cancels the live booking of that kind; a cancelled procedure puts the case back to decided. */
  async cancel(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    kind: BookingKind,
    body: CancelBooking,
  ): Promise<BookingView> {
    const doing = kind === 'procedure' ? 'cancels the procedure' : 'cancels the follow-up imaging';
    const found = await caseForCoordinator(this.em, user, caseId, doing);
    const bookingId = await this.em.transactional(async (em) => {
      await this.lockCalendar(em);
      const locked = await this.lockCase(em, found.id);
      const booking = await this.liveBooking(em, found.id, kind);
      if (!booking) {
        throw new NotFoundError(
          kind === 'procedure' ? 'The live procedure booking' : 'The live follow-up booking',
        );
      }
      booking.state = 'cancelled';
      booking.sequence += 1;
      appendBookingEvent(em, booking.id, user.id, 'cancelled', body.reason);
      if (kind === 'procedure') locked.status = 'decided';
      recordAudit(em, actor, {
        action: kind === 'procedure' ? 'booking.cancel' : 'follow-up.cancel',
        entityType: 'case',
        entityId: found.id,
        detail: { bookingId: booking.id, reason: body.reason },
      });
      return booking.id;
    });
    await this.notify(bookingId, 'cancelled');
    return this.view(user, bookingId);
  }

  // ------------------------------------------------------------ follow-up

  async createFollowUp(
    user: SignedInUser,
    actor: Actor,
    caseId: string,
    body: CreateFollowUp,
  ): Promise<BookingView> {
    const found = await caseForCoordinator(this.em, user, caseId, 'books the follow-up imaging');
    const startsAt = new Date(body.startsAt);
    const bookingId = await this.em.transactional(async (em) => {
      await this.lockCalendar(em);
      const locked = await this.lockCase(em, found.id);
      if (locked.status !== 'treated' && locked.status !== 'follow-up-due') {
        throw new ConflictError(
          `Follow-up imaging is booked once the procedure is recorded; the case is ${locked.status}.`,
        );
      }
      if (await this.liveBooking(em, found.id, 'follow-up-imaging')) {
        throw new ConflictError('The case has a live follow-up booking: cancel it first.');
      }
      await this.assertNoClash(em, user, {
        startsAt,
        durationMin: body.durationMin,
        room: body.room,
        operatorId: null,
        excludeId: null,
      });
      const booking = new ProcedureBooking({
        clinicalCase: em.getReference(ClinicalCase, found.id, { wrapped: true }),
        kind: 'follow-up-imaging',
        startsAt,
        durationMin: body.durationMin,
        room: body.room,
        bookedBy: em.getReference(User, user.id, { wrapped: true }),
      });
      booking.modality = body.modality;
      booking.notes = body.notes || null;
      em.persist(booking);
      appendBookingEvent(em, booking.id, user.id, 'booked');
      recordAudit(em, actor, {
        action: 'follow-up.create',
        entityType: 'case',
        entityId: found.id,
        detail: { bookingId: booking.id, modality: body.modality },
      });
      return booking.id;
    });
    await this.notify(bookingId, 'booked');
    return this.view(user, bookingId);
  }

  view(user: SignedInUser, bookingId: string): Promise<BookingView> {
    return loadBookingView(this.em, user, bookingId, this.options.mail);
  }

  // ------------------------------------------------------------ rules

  private assertBookable(found: ClinicalCase, decision: Decision | null): void {
    if (!decision || !bookableTreatments.includes(decision.outcome)) {
      throw new ConflictError(
        'The board’s decision is not a procedure booked here (ablation, TACE or TARE).',
      );
    }
    if (found.status !== 'decided') {
      throw new ConflictError(
        `A procedure is booked for a decided case; this one is ${found.status}.`,
      );
    }
  }

  /** The operator: an active proceduralist who is a member of the case's board (400 otherwise). */
  private async assertOperator(boardId: string, operatorId: string): Promise<void> {
    const operator = await this.em.findOne(User, { id: operatorId, isActive: true });
    const isMember =
      operator && (await this.em.count(BoardMembership, { board: boardId, user: operator.id })) > 0;
    if (!operator || !isMember || !operator.roles.includes('proceduralist')) {
      const message = 'The operator must be an active proceduralist of the case’s board.';
      throw new ValidationError(`operatorId: ${message}`, [{ path: 'operatorId', message }]);
    }
  }

  /**
   * The selected plan's applicator profiles: as its newest finished assessment froze them (name
   * and version), else as the profiles stand now.
   */
  private async applicatorsOf(decision: Decision | null): Promise<BookedApplicator[]> {
    if (!decision?.selectedPlan) return [];
    const [assessment] = await this.em.find(
      Assessment,
      { plan: decision.selectedPlan.id, status: 'done' },
      { orderBy: { createdAt: 'desc' }, limit: 1 },
    );
    const frozen = assessment ? toAssessmentView(assessment).inputs?.applicatorProfiles : undefined;
    if (frozen?.length) {
      return frozen.map(({ id, name, version }) => ({ profileId: id, name, version }));
    }
    const plan = await this.em.findOneOrFail(NeedlePlan, decision.selectedPlan.id);
    const ids = [...new Set(plan.applicators.map((applicator) => applicator.profileId))];
    const profiles = await this.em.find(ApplicatorProfile, { id: { $in: ids } });
    return profiles.map((profile) => ({
      profileId: profile.id,
      name: profile.name,
      version: profile.version,
    }));
  }

  private async lockCalendar(em: EntityManager): Promise<void> {
    await em.execute(`select pg_advisory_xact_lock(${bookingCalendarLock})`);
  }

  private lockCase(em: EntityManager, caseId: string): Promise<ClinicalCase> {
    return em.findOneOrFail(ClinicalCase, caseId, {
      lockMode: LockMode.PESSIMISTIC_WRITE,
      refresh: true,
    });
  }

  private liveBooking(
    em: EntityManager,
    caseId: string,
    kind: BookingKind,
  ): Promise<ProcedureBooking | null> {
    return em.findOne(
      ProcedureBooking,
      { clinicalCase: caseId, kind, state: { $in: ['booked', 'confirmed'] } },
      { populate: ['operator'] },
    );
  }

  /**
   * 409 when a live booking of the same room, or of the same operator, overlaps
   * [start, start + duration). Touching ends (one ends when the other starts) do not clash. The
   * other case is named only when the user may see it.
   */
  private async assertNoClash(
    em: EntityManager,
    user: SignedInUser,
    candidate: {
      startsAt: Date;
      durationMin: number;
      room: string;
      operatorId: string | null;
      excludeId: string | null;
    },
  ): Promise<void> {
    const endsAt = new Date(candidate.startsAt.getTime() + candidate.durationMin * 60_000);
    const roomKey = roomKeyOf(candidate.room);
    const others = await em.find(
      ProcedureBooking,
      {
        state: { $in: ['booked', 'confirmed'] },
        startsAt: { $lt: endsAt, $gte: new Date(candidate.startsAt.getTime() - longestBookingMs) },
        ...(candidate.excludeId ? { id: { $ne: candidate.excludeId } } : {}),
        $or: [{ roomKey }, ...(candidate.operatorId ? [{ operator: candidate.operatorId }] : [])],
      },
      { populate: ['clinicalCase', 'operator'], orderBy: { startsAt: 'asc' } },
    );
    const overlapping = others.filter((other) => other.endsAt > candidate.startsAt);
    const clash = overlapping.find((other) => other.roomKey === roomKey) ?? overlapping[0] ?? null;
    if (!clash) return;
    const other = clash.clinicalCase.getEntity();
    const whose = (await maySeeCase(em, user, other.id))
      ? `case ${other.caseCode}`
      : 'another booking';
    const span = timeSpan(clash.startsAt, clash.endsAt, this.options.timeZone);
    if (clash.roomKey === roomKey) {
      throw new ConflictError(`Room clash: ${clash.room} is booked ${span} for ${whose}.`);
    }
    const operatorName = clash.operator?.getEntity().displayName ?? 'The operator';
    throw new ConflictError(`Operator clash: ${operatorName} is booked ${span} for ${whose}.`);
  }

  // ------------------------------------------------------------ mail

  /**
   * The care team's mail after a committed change: the operator, the case's presenter and the
   * coordinator who booked. A rebooking that changes the operator also sends the previous one the
   * cancellation. A mail that cannot be queued is logged; the booking stands and its view shows
   * what was (not) sent.
   */
  private async notify(
    bookingId: string,
    kind: BookingMailKind,
    previousOperatorId: string | null = null,
  ): Promise<void> {
    const mail = this.options.mail;
    if (!mail) return;
    try {
      const em = this.em.fork();
      const booking = await em.findOneOrFail(ProcedureBooking, bookingId, {
        populate: ['clinicalCase', 'operator', 'bookedBy'],
      });
      const clinicalCase = booking.clinicalCase.getEntity();
      const decision = await em.findOne(Decision, { clinicalCase: clinicalCase.id });
      const presenter = await em.findOneOrFail(User, clinicalCase.presenter.id);
      const operator = booking.operator?.getEntity() ?? null;
      const organizer = booking.bookedBy.getEntity();
      const person = (user: User) => ({ name: user.displayName, email: user.email });
      const attendees = [operator, presenter]
        .filter((user): user is User => !!user && user.isActive)
        .map(person);
      const facts = {
        booking,
        caseCode: clinicalCase.caseCode,
        procedure: procedureName(booking, decision?.outcome ?? null),
        operatorName: operator?.displayName ?? null,
        organizer: person(organizer),
        attendees,
        timeZone: this.options.timeZone,
      };
      await mail.queueMail(bookingMail(kind, facts));
      if (previousOperatorId && previousOperatorId !== operator?.id) {
        const previous = await em.findOne(User, { id: previousOperatorId, isActive: true });
        if (previous) {
          await mail.queueMail({
            ...bookingMail('cancelled', { ...facts, attendees: [person(previous)] }),
            to: [previous.email],
          });
        }
      }
    } catch (error) {
      this.options.log(`The booking mail could not be queued (booking ${bookingId})`, error);
    }
  }
}

/** The fields a rebooking may change, as text for the history. */
function describe(booking: ProcedureBooking): Record<string, string | null> {
  return {
    startsAt: booking.startsAt.toISOString(),
    durationMin: String(booking.durationMin),
    room: booking.room,
    operatorId: booking.operator?.id ?? null,
    anaesthesia: booking.anaesthesia,
    notes: booking.notes,
  };
}
