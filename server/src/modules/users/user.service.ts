import type { EntityManager } from '@mikro-orm/postgresql';
import type { CurrentUser, Role } from '@emberline/shared';
import type { SignedInUser } from '../../common/request-context';
import { BoardMembership } from '../boards/board-membership.entity';
import { RolePolicy } from './role-policy.entity';
import { User } from './user.entity';

/** Builds the request's view of a user: roles, boards, and whether a second factor is owed. */
export async function loadSignedInUser(
  em: EntityManager,
  userId: string,
  signInMethod: 'local' | 'saml',
): Promise<SignedInUser | null> {
  const user = await em.findOne(User, { id: userId, isActive: true });
  if (!user) return null;
  const memberships = await em.find(BoardMembership, { user: user.id }, { populate: ['board'] });
  const requiresTotp =
    signInMethod === 'local' && user.roles.length > 0
      ? (await em.count(RolePolicy, { role: { $in: user.roles }, requiresTotp: true })) > 0
      : false;
  const hasTotp = user.totpEnabledAt !== null;
  return {
    id: user.id,
    email: user.email,
    displayName: user.displayName,
    roles: [...user.roles],
    memberships: new Map(memberships.map((m) => [m.board.id, m.specialty])),
    boardNames: new Map(memberships.map((m) => [m.board.id, m.board.getEntity().name])),
    signInMethod,
    hasTotp,
    mustEnrolTotp: requiresTotp && !hasTotp,
  };
}

export function toCurrentUser(user: SignedInUser): CurrentUser {
  return {
    id: user.id,
    email: user.email,
    displayName: user.displayName,
    roles: user.roles,
    boards: [...user.memberships].map(([boardId, specialty]) => ({
      boardId,
      boardName: user.boardNames.get(boardId) ?? '',
      specialty,
    })),
    signInMethod: user.signInMethod,
    hasTotp: user.hasTotp,
    mustEnrolTotp: user.mustEnrolTotp,
  };
}

export function rolesOf(user: User): Role[] {
  return [...user.roles];
}
