import { HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable } from '@angular/core';
import type { AgendaItemVotes, AnnotationView, CommentView } from '@emberline/shared';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/**
 * What the board said and marked about a case, read for the case file's Discussion section:
 * its annotations, its comments on every agenda item and the votes cast. Resources (create them
 * in an injection context), idle while the case id is undefined; the section shows their errors
 * in its own panels, so no snack bar.
 */
@Injectable({ providedIn: 'root' })
export class DiscussionApi {
  annotations(caseId: () => string | undefined): HttpResourceRef<AnnotationView[] | undefined> {
    return httpResource<AnnotationView[]>(() => caseRequest(caseId(), 'annotations'));
  }

  comments(caseId: () => string | undefined): HttpResourceRef<CommentView[] | undefined> {
    return httpResource<CommentView[]>(() => caseRequest(caseId(), 'comments'));
  }

  /** The positions cast on each agenda item of the case, oldest meeting first. */
  votes(caseId: () => string | undefined): HttpResourceRef<AgendaItemVotes[] | undefined> {
    return httpResource<AgendaItemVotes[]>(() => caseRequest(caseId(), 'votes'));
  }
}

function caseRequest(
  caseId: string | undefined,
  what: 'annotations' | 'comments' | 'votes',
): { url: string; context: HttpContext } | undefined {
  if (!caseId) return undefined;
  return {
    url: `/api/cases/${encodeURIComponent(caseId)}/${what}`,
    context: new HttpContext().set(SHOWS_OWN_ERRORS, true),
  };
}
