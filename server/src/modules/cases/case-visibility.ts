import type { FilterQuery } from '@mikro-orm/core';
import { coordinatorVisibleStatuses } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import type { SignedInUser } from '../../common/request-context';
import type { ClinicalCase } from './case.entity';

/**
 * Which cases a user may see at all: those of their boards; a nurse coordinator only decided
 * ones; an administrator none. Every lookup of a case, or of what hangs from one (series, plans,
 * assessments), goes through this filter, so a case out of reach answers 404 everywhere.
 */
export function visibilityFilter(user: SignedInUser): FilterQuery<ClinicalCase> {
  const boardIds = [...user.memberships.keys()];
  if (boardIds.length === 0) return { id: { $in: [] } };
  if (hasRole(user, 'presenting-physician', 'board-member', 'proceduralist'))
    return { board: { $in: boardIds } };
  if (hasRole(user, 'nurse-coordinator')) {
    return { board: { $in: boardIds }, status: { $in: [...coordinatorVisibleStatuses] } };
  }
  return { id: { $in: [] } };
}
