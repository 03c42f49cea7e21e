import type { EntityManager } from '@mikro-orm/postgresql';
import {
  bookableTreatments,
  bookingUrgencies,
  type BookingQueueItem,
  type BookingQueueQuery,
  type BookingView,
  type CaseLogisticsView,
} from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import type { Actor, SignedInUser } from '../../common/request-context';
import { writeAudit } from '../audit/audit.service';
import { BoardMembership } from '../boards/board-membership.entity';
import { ClinicalCase } from '../cases/case.entity';
import { Decision } from '../decisions/decision.entity';
import type { MailService } from '../mail/mail.service';
import { ProcedureBooking } from './booking.entity';
import { isLive, toBookingSummary, toBookingView } from './booking-view';
import { TreatmentRecord } from './treatment-record.entity';
import { toTreatmentView } from './treatment';

/**
 * The Logistics section of a case, for anyone who may see the case (the case file's 404
 * otherwise): the current procedure booking (live, else done), cancelled bookings newest first,
 * the treatment and the follow-up, and what the user may do. Audited as `logistics.read`.
 */
export async function caseLogistics(
  em: EntityManager,
  user: SignedInUser,
  actor: Actor,
  caseId: string,
  mail: MailService | null,
): Promise<CaseLogisticsView> {
  const found = await em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId);
  const decision = await em.findOne(Decision, { clinicalCase: found.id });
  const bookings = await em.find(
    ProcedureBooking,
    { clinicalCase: found.id },
    { populate: ['clinicalCase', 'operator', 'bookedBy'], orderBy: { createdAt: 'desc' } },
  );
  const current = (kind: ProcedureBooking['kind']) =>
    bookings.find((booking) => booking.kind === kind && isLive(booking)) ??
    bookings.find((booking) => booking.kind === kind && booking.state === 'done') ??
    null;
  const view = (booking: ProcedureBooking | null): Promise<BookingView | null> =>
    booking ? toBookingView(em, user, booking, mail) : Promise.resolve(null);
  const procedure = current('procedure');
  const followUp = current('follow-up-imaging');
  const past = await Promise.all(
    bookings
      .filter((booking) => booking.state === 'cancelled')
      .map((booking) => toBookingView(em, user, booking, mail)),
  );
  const treatment = await em.findOne(
    TreatmentRecord,
    { clinicalCase: found.id },
    { populate: ['operator'] },
  );
  const isCoordinator = hasRole(user, 'nurse-coordinator');
  const isBookable =
    !!decision && bookableTreatments.includes(decision.outcome) && found.status === 'decided';
  const operators = isCoordinator
    ? (
        await em.find(
          BoardMembership,
          { board: found.board.id, user: { isActive: true } },
          { populate: ['user'] },
        )
      )
        .map((membership) => membership.user.getEntity())
        .filter((candidate) => candidate.roles.includes('proceduralist'))
        .map((candidate) => ({ id: candidate.id, displayName: candidate.displayName }))
        .sort((a, b) => a.displayName.localeCompare(b.displayName))
    : [];
  await writeAudit(em, actor, {
    action: 'logistics.read',
    entityType: 'case',
    entityId: found.id,
    detail: { bookingIds: bookings.map((booking) => booking.id) },
  });
  return {
    caseId: found.id,
    caseStatus: found.status,
    outcome: decision?.outcome ?? null,
    urgency: decision?.urgency ?? null,
    isBookable,
    procedure: await view(procedure),
    past,
    treatment: treatment ? toTreatmentView(treatment) : null,
    followUp: await view(followUp),
    operators,
    permissions: {
      canBook: isCoordinator && isBookable && !(procedure && isLive(procedure)),
      canRecordTreatment: procedure?.state === 'confirmed' && procedure.operator?.id === user.id,
    },
  };
}

const urgencyRank = (urgency: string) =>
  -bookingUrgencies.indexOf(urgency as (typeof bookingUrgencies)[number]);

/**
 * The coordinator's queue over the user's boards: decided cases to book (`procedure`) and treated
 * cases whose follow-up imaging is not booked yet or has fallen due (`follow-up`); booked ones
 * too with `includeBooked`. Most urgent first, then the oldest decision; follow-ups by due date.
 */
export async function bookingQueue(
  em: EntityManager,
  user: SignedInUser,
  actor: Actor,
  query: BookingQueueQuery,
): Promise<BookingQueueItem[]> {
  const boardIds = [...user.memberships.keys()].filter(
    (id) => !query.boardId || id === query.boardId,
  );
  const includeBooked = query.includeBooked === 'true';
  const statuses = [
    ...(query.kind !== 'follow-up' ? ['decided', ...(includeBooked ? ['booked'] : [])] : []),
    ...(query.kind !== 'procedure' ? ['treated', 'follow-up-due'] : []),
  ];
  const cases = boardIds.length
    ? await em.find(
        ClinicalCase,
        { board: { $in: boardIds }, status: { $in: statuses as ClinicalCase['status'][] } },
        { populate: ['board'] },
      )
    : [];
  const caseIds = cases.map((found) => found.id);
  const decisions = caseIds.length
    ? await em.find(Decision, { clinicalCase: { $in: caseIds } }, { populate: ['selectedPlan'] })
    : [];
  const bookings = caseIds.length
    ? await em.find(
        ProcedureBooking,
        { clinicalCase: { $in: caseIds }, state: { $in: ['booked', 'confirmed'] } },
        { populate: ['operator'] },
      )
    : [];
  const treatments = caseIds.length
    ? await em.find(TreatmentRecord, { clinicalCase: { $in: caseIds } })
    : [];
  const items: BookingQueueItem[] = [];
  for (const found of cases) {
    const decision = decisions.find((entry) => entry.clinicalCase.id === found.id);
    if (!decision || !bookableTreatments.includes(decision.outcome)) continue;
    if (query.urgency && decision.urgency !== query.urgency) continue;
    const isProcedure = found.status === 'decided' || found.status === 'booked';
    const booking =
      bookings.find(
        (entry) =>
          entry.clinicalCase.id === found.id &&
          entry.kind === (isProcedure ? 'procedure' : 'follow-up-imaging'),
      ) ?? null;
    const treatment = treatments.find((entry) => entry.clinicalCase.id === found.id);
    if (isProcedure && booking && !includeBooked) continue;
    if (found.status === 'treated' && booking && !includeBooked) continue;
    const plan = decision.selectedPlan?.getEntity() ?? null;
    items.push({
      caseId: found.id,
      caseCode: found.caseCode,
      caseStatus: found.status,
      board: { id: found.board.id, name: found.board.getEntity().name },
      kind: isProcedure ? 'procedure' : 'follow-up',
      outcome: decision.outcome,
      urgency: decision.urgency,
      decisionSignedAt: decision.signedAt.toISOString(),
      conditions: decision.conditions,
      selectedPlan: plan ? { id: plan.id, name: plan.name } : null,
      booking: booking ? toBookingSummary(booking) : null,
      dueDate: isProcedure
        ? null
        : ((booking?.startsAt ?? treatment?.followUpProposedAt)?.toISOString() ?? null),
    });
  }
  items.sort(
    (a, b) =>
      urgencyRank(a.urgency) - urgencyRank(b.urgency) ||
      (a.dueDate ?? a.decisionSignedAt).localeCompare(b.dueDate ?? b.decisionSignedAt) ||
      a.caseCode.localeCompare(b.caseCode),
  );
  await writeAudit(em, actor, {
    action: 'bookings.queue-read',
    detail: { count: items.length, caseIds: items.map((item) => item.caseId) },
  });
  return items;
}
