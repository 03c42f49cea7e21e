import type { CommentView } from '@emberline/shared';

/** A comment with the answers to it, each in the order they were posted. */
export interface CommentThread {
  comment: CommentView;
  replies: CommentThread[];
}

/** The comments of one agenda item, under the meeting it was discussed at. */
export interface AgendaItemComments {
  agendaItemId: string;
  /** When the item's meeting starts (ISO 8601), or null when the case's votes did not say. */
  meetingStartsAt: string | null;
  threads: CommentThread[];
}

const byPostingTime = (a: CommentView, b: CommentView): number =>
  a.createdAt.localeCompare(b.createdAt) || a.id.localeCompare(b.id);

/**
 * The comments of one item as threads: each answer under the comment it answers, every level in
 * the order posted. An answer whose comment is not in the list (or a loop of answers, which the
 * server never makes) is shown at the top level rather than dropped: nothing said is hidden.
 */
export function commentThreads(comments: readonly CommentView[]): CommentThread[] {
  const sorted = [...comments].sort(byPostingTime);
  const ids = new Set(sorted.map((comment) => comment.id));
  const children = new Map<string, CommentView[]>();
  for (const comment of sorted) {
    if (comment.parentId !== null && ids.has(comment.parentId)) {
      const siblings = children.get(comment.parentId) ?? [];
      siblings.push(comment);
      children.set(comment.parentId, siblings);
    }
  }
  const placed = new Set<string>();
  const grow = (comment: CommentView): CommentThread => {
    placed.add(comment.id);
    return {
      comment,
      replies: (children.get(comment.id) ?? []).filter((reply) => !placed.has(reply.id)).map(grow),
    };
  };
  const threads = sorted
    .filter((comment) => comment.parentId === null || !ids.has(comment.parentId))
    .map(grow);
  for (const comment of sorted) {
    if (!placed.has(comment.id)) threads.push(grow(comment));
  }
  return threads;
}

/**
 * A case's comments grouped by agenda item, the items in the order of their meetings (as the
 * case's vote history lists them); items the history does not name come last. Items without
 * a comment are left out.
 */
export function commentsByAgendaItem(
  comments: readonly CommentView[],
  items: readonly { agendaItemId: string; meetingStartsAt: string }[],
): AgendaItemComments[] {
  const groups = new Map<string, CommentView[]>();
  for (const comment of comments) {
    const group = groups.get(comment.agendaItemId) ?? [];
    group.push(comment);
    groups.set(comment.agendaItemId, group);
  }
  const known = items
    .filter((item) => groups.has(item.agendaItemId))
    .map((item) => ({
      agendaItemId: item.agendaItemId,
      meetingStartsAt: item.meetingStartsAt,
      threads: commentThreads(groups.get(item.agendaItemId) ?? []),
    }));
  const namedIds = new Set(items.map((item) => item.agendaItemId));
  const unnamed = [...groups.entries()]
    .filter(([agendaItemId]) => !namedIds.has(agendaItemId))
    .map(([agendaItemId, group]) => ({
      agendaItemId,
      meetingStartsAt: null,
      threads: commentThreads(group),
    }));
  return [...known, ...unnamed];
}
