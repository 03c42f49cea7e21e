import type { CaseDetail, CurrentUser } from '@emberline/shared';
import { mayAnnotateCase } from './annotation-permissions';

/*
 * The server's rule (server/src/modules/annotations/README.md): the presenting physicians,
 * board members and proceduralists of the case's board annotate; a nurse coordinator does not
 * (403); once the case is decided every change answers 409.
 */
const detail: Pick<CaseDetail, 'board' | 'status'> = {
  board: { id: 'board-north', name: 'North' },
  status: 'on-agenda',
};

function user(
  roles: CurrentUser['roles'],
  boardIds: string[],
): Pick<CurrentUser, 'roles' | 'boards'> {
  return {
    roles,
    boards: boardIds.map((boardId) => ({ boardId, boardName: boardId, specialty: 'hepatology' })),
  };
}

describe('who annotates a case from the case file', () => {
  it('lets the clinical members of the case’s board annotate', () => {
    for (const role of ['presenting-physician', 'board-member', 'proceduralist'] as const) {
      expect(mayAnnotateCase(detail, user([role], ['board-north']))).toBe(true);
    }
  });

  it('refuses a nurse coordinator, another board’s member and nobody signed in', () => {
    expect(mayAnnotateCase(detail, user(['nurse-coordinator'], ['board-north']))).toBe(false);
    expect(mayAnnotateCase(detail, user(['board-member'], ['board-south']))).toBe(false);
    expect(mayAnnotateCase(detail, null)).toBe(false);
  });

  it('refuses once the case is decided, and after', () => {
    const member = user(['board-member'], ['board-north']);
    expect(mayAnnotateCase({ ...detail, status: 'ready-for-board' }, member)).toBe(true);
    for (const status of ['decided', 'booked', 'treated', 'follow-up-due'] as const) {
      expect(mayAnnotateCase({ ...detail, status }, member)).toBe(false);
    }
  });
});
