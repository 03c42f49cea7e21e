import { httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable } from '@angular/core';
import type { BoardMemberView, BoardView } from '@emberline/shared';

/** The boards the signed-in user belongs to (call in an injection context). */
@Injectable({ providedIn: 'root' })
export class BoardApi {
  boards(): HttpResourceRef<BoardView[] | undefined> {
    return httpResource<BoardView[]>(() => '/api/boards');
  }

  members(boardId: () => string | undefined): HttpResourceRef<BoardMemberView[] | undefined> {
    return httpResource<BoardMemberView[]>(() => {
      const id = boardId();
      return id ? `/api/boards/${encodeURIComponent(id)}/members` : undefined;
    });
  }
}
