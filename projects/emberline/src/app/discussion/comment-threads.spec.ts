import type { CommentView } from '@emberline/shared';
import { commentThreads, commentsByAgendaItem, type CommentThread } from './comment-threads';

// Invented comments of one demo case.
function comment(
  id: string,
  createdAt: string,
  parentId: string | null = null,
  agendaItemId = 'item-1',
): CommentView {
  return {
    id,
    agendaItemId,
    caseId: 'case-1',
    parentId,
    author: { id: 'user-1', displayName: 'Dr Example' },
    body: `Comment ${id}`,
    isForMinutes: false,
    createdAt,
  };
}

/** The thread as nested ids, to compare shapes at a glance. */
function shape(threads: CommentThread[]): unknown[] {
  return threads.map((thread) =>
    thread.replies.length ? [thread.comment.id, shape(thread.replies)] : thread.comment.id,
  );
}

describe('commentThreads', () => {
  it('puts each answer under the comment it answers, every level in the order posted', () => {
    const threads = commentThreads([
      comment('b', '2026-12-09T15:05:00Z'),
      comment('a2', '2026-12-09T15:04:00Z', 'a'),
      comment('a', '2026-12-09T15:01:00Z'),
      comment('a1', '2026-12-09T15:02:00Z', 'a'),
      comment('a1x', '2026-12-09T15:03:00Z', 'a1'),
    ]);

    expect(shape(threads)).toEqual([['a', [['a1', ['a1x']], 'a2']], 'b']);
  });

  it('shows an answer to a comment it does not have at the top level rather than dropping it', () => {
    const threads = commentThreads([
      comment('a', '2026-12-09T15:01:00Z'),
      comment('orphan', '2026-12-09T15:02:00Z', 'not-listed'),
    ]);

    expect(shape(threads)).toEqual(['a', 'orphan']);
  });

  it('keeps every comment of a loop of answers (never made by the server) exactly once', () => {
    const threads = commentThreads([
      comment('x', '2026-12-09T15:01:00Z', 'y'),
      comment('y', '2026-12-09T15:02:00Z', 'x'),
    ]);

    expect(shape(threads)).toEqual([['x', ['y']]]);
  });
});

describe('commentsByAgendaItem', () => {
  it('groups by agenda item in the order of the meetings, unknown items last, silent items out', () => {
    const groups = commentsByAgendaItem(
      [
        comment('late', '2026-12-16T15:00:00Z', null, 'item-2'),
        comment('early', '2026-12-09T15:00:00Z', null, 'item-1'),
        comment('lost', '2026-12-20T15:00:00Z', null, 'item-9'),
      ],
      [
        { agendaItemId: 'item-1', meetingStartsAt: '2026-12-09T15:00:00.000Z' },
        { agendaItemId: 'item-3', meetingStartsAt: '2026-12-12T15:00:00.000Z' },
        { agendaItemId: 'item-2', meetingStartsAt: '2026-12-16T15:00:00.000Z' },
      ],
    );

    expect(groups.map((group) => [group.agendaItemId, group.meetingStartsAt])).toEqual([
      ['item-1', '2026-12-09T15:00:00.000Z'],
      ['item-2', '2026-12-16T15:00:00.000Z'],
      ['item-9', null],
    ]);
  });
});
