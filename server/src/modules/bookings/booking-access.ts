import type { EntityManager } from '@mikro-orm/postgresql';
import { coordinatorVisibleStatuses } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ForbiddenError, NotFoundError } from '../../common/errors';
import type { SignedInUser } from '../../common/request-context';
import { ClinicalCase } from '../cases/case.entity';
import { visibilityFilter } from '../cases/case-visibility';
import { ProcedureBooking } from './booking.entity';

/**
 * The case, for a nurse coordinator of its board. As for the decision: off the board 404; on the
 * board without the role 403, the refusal being about the act; a coordinator asking about a case
 * not yet decided (which a coordinator cannot see) 404.
 */
export async function caseForCoordinator(
  em: EntityManager,
  user: SignedInUser,
  caseId: string,
  doing: string,
): Promise<ClinicalCase> {
  const found = await em.findOne(
    ClinicalCase,
    { id: caseId, board: { $in: [...user.memberships.keys()] } },
    { populate: ['board'] },
  );
  if (!found) throw new NotFoundError('The case');
  if (!hasRole(user, 'nurse-coordinator')) {
    throw new ForbiddenError(`Only a nurse coordinator of the case’s board ${doing}.`);
  }
  if (!coordinatorVisibleStatuses.includes(found.status)) throw new NotFoundError('The case');
  return found;
}

/** A booking of a case the user may see (404 otherwise), with its case loaded. */
export async function visibleBooking(
  em: EntityManager,
  user: SignedInUser,
  bookingId: string,
): Promise<ProcedureBooking> {
  const booking = await em.findOne(
    ProcedureBooking,
    { id: bookingId, clinicalCase: visibilityFilter(user) },
    { populate: ['clinicalCase', 'operator', 'bookedBy'] },
  );
  if (!booking) throw new NotFoundError('The booking');
  return booking;
}

/** Whether the user may see the case (for naming another booking's case in a clash). */
export async function maySeeCase(
  em: EntityManager,
  user: SignedInUser,
  caseId: string,
): Promise<boolean> {
  return (await em.count(ClinicalCase, { $and: [{ id: caseId }, visibilityFilter(user)] })) > 0;
}
