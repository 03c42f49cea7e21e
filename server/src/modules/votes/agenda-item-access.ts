import { LockMode } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { Role } from '@emberline/shared';
import { hasRole } from '../../common/auth-middleware';
import { ConflictError, ForbiddenError, NotFoundError } from '../../common/errors';
import type { SignedInUser } from '../../common/request-context';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { Meeting } from '../meetings/meeting.entity';

/**
 * The roles that take part in a board's discussion and vote. Nurse coordinators organise the
 * meeting and administrators run the system; neither weighs in on the treatment.
 */
export const clinicalRoles: readonly Role[] = [
  'presenting-physician',
  'board-member',
  'proceduralist',
];

/**
 * An agenda item as its meeting is seen: by the members of the board and by administrators.
 * Anyone else gets the same 404 as for an item that does not exist.
 */
export async function findVisibleItem(
  em: EntityManager,
  user: SignedInUser,
  itemId: string,
): Promise<AgendaItem> {
  const item = await em.findOne(AgendaItem, itemId, { populate: ['meeting'] });
  if (!item || !canSeeBoard(user, item.meeting.getEntity().board.id)) {
    throw new NotFoundError('The agenda item');
  }
  return item;
}

export function canSeeBoard(user: SignedInUser, boardId: string): boolean {
  return user.memberships.has(boardId) || hasRole(user, 'administrator');
}

/** 403 unless the user is a presenting physician, board member or proceduralist of the board. */
export function assertClinicalMember(user: SignedInUser, boardId: string, doing: string): void {
  if (!user.memberships.has(boardId) || !hasRole(user, ...clinicalRoles)) {
    throw new ForbiddenError(
      `Only the presenting physicians, board members and proceduralists of the board ${doing}.`,
    );
  }
}

/**
 * Inside a transaction: the item and its meeting read again under a lock, and a 409 when either
 * has closed. The meeting is locked for share and the item for update, so a close that commits
 * meanwhile (it updates both rows) waits for this change or is seen by it, never slips past.
 */
export async function lockOpenItem(
  em: EntityManager,
  item: AgendaItem,
  closedMessage: string,
): Promise<{ item: AgendaItem; meeting: Meeting }> {
  const meeting = await em.findOneOrFail(Meeting, item.meeting.id, {
    lockMode: LockMode.PESSIMISTIC_READ,
    refresh: true,
  });
  const locked = await em.findOneOrFail(AgendaItem, item.id, {
    lockMode: LockMode.PESSIMISTIC_WRITE,
    refresh: true,
  });
  if (locked.closedAt !== null || meeting.state === 'closed') {
    throw new ConflictError(closedMessage);
  }
  return { item: locked, meeting };
}
