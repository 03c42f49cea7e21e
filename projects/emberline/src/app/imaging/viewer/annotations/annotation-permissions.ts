import {
  caseStatuses,
  type CaseDetail,
  type CaseStatus,
  type CurrentUser,
  type Role,
} from '@emberline/shared';

/**
 * The roles that take part in a board's discussion, and so annotate: the server's rule
 * (annotations README: presenting physicians, board members and proceduralists of the board;
 * nurse coordinators and administrators do not).
 */
export const annotatingRoles: readonly Role[] = [
  'presenting-physician',
  'board-member',
  'proceduralist',
];

/** Decided or later: the record, annotations included, stays as the board saw it. */
export function isDecidedOrLater(status: CaseStatus): boolean {
  return caseStatuses.indexOf(status) >= caseStatuses.indexOf('decided');
}

/**
 * Whether the signed-in user may annotate this case from the case file: a clinical member of
 * the case's board while the case is not decided. The server decides in the end (403, 409);
 * this only keeps the annotate mode from being offered in vain.
 */
export function mayAnnotateCase(
  detail: Pick<CaseDetail, 'board' | 'status'>,
  user: Pick<CurrentUser, 'roles' | 'boards'> | null | undefined,
): boolean {
  if (!user || isDecidedOrLater(detail.status)) return false;
  const isMember = user.boards.some((membership) => membership.boardId === detail.board.id);
  return isMember && user.roles.some((role) => annotatingRoles.includes(role));
}
