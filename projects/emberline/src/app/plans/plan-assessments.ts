import { Injectable, inject, signal } from '@angular/core';
import type { AssessmentView, RequestAssessment } from '@emberline/shared';
import { tap, type Observable } from 'rxjs';
import { problemMessage } from '../core/problem';
import { AssessmentApi } from './assessment-api';

/** What is known of one plan's assessments. */
export interface PlanAssessmentState {
  isLoading: boolean;
  /** The newest assessment, or null when the plan was never assessed. */
  latest: AssessmentView | null;
  /** Why the list could not be read; empty when it was. */
  error: string;
}

const unread: PlanAssessmentState = { isLoading: false, latest: null, error: '' };

/**
 * The newest assessment of each plan on screen, shared by the per-plan request control and the
 * plan comparison so that a request made in one shows in the other. Keyed by plan id; the map
 * is replaced, never changed in place, so readers are signals.
 */
@Injectable({ providedIn: 'root' })
export class PlanAssessments {
  private readonly api = inject(AssessmentApi);
  private readonly states = signal<ReadonlyMap<string, PlanAssessmentState>>(new Map());

  /** The state of a plan (a signal read: call it inside `computed` or a template). */
  stateOf(planId: string): PlanAssessmentState {
    return this.states().get(planId) ?? unread;
  }

  /**
   * Reads the newest assessment of each plan not read yet; with `refresh`, of every plan not
   * being read right now (a comparison that opens reads afresh what another screen left).
   */
  load(planIds: readonly string[], options: { refresh?: boolean } = {}): void {
    const known = this.states();
    for (const planId of planIds) {
      const state = known.get(planId);
      const isWanted = state ? !state.isLoading && (options.refresh || state.error !== '') : true;
      if (isWanted) this.read(planId);
    }
  }

  /** Requests an assessment; the answer (new, or the unchanged plan's existing one) is kept. */
  request(planId: string, body: RequestAssessment = {}): Observable<AssessmentView> {
    return this.api.request(planId, body).pipe(tap((view) => this.replace(view)));
  }

  /** Keeps a newer state of an assessment (a finished run, a fresh request). */
  replace(view: AssessmentView): void {
    this.patch(view.planId, (state) => ({ ...state, latest: newest(state.latest, view) }));
  }

  private read(planId: string): void {
    this.patch(planId, (state) => ({ ...state, isLoading: true, error: '' }));
    this.api.listForPlan(planId).subscribe({
      next: (list) =>
        this.patch(planId, (state) => ({
          isLoading: false,
          error: '',
          latest: list.length ? newest(state.latest, list[0]) : state.latest,
        })),
      error: (error: unknown) =>
        this.patch(planId, (state) => ({
          ...state,
          isLoading: false,
          error: problemMessage(error),
        })),
    });
  }

  private patch(planId: string, change: (state: PlanAssessmentState) => PlanAssessmentState): void {
    this.states.update((states) => {
      const next = new Map(states);
      next.set(planId, change(states.get(planId) ?? unread));
      return next;
    });
  }
}

/**
 * The later of two states: another assessment if it was created later, the same assessment if
 * its state changed later (a list read while a run finished must not bring back "running").
 */
export function newest(current: AssessmentView | null, incoming: AssessmentView): AssessmentView {
  if (!current) return incoming;
  if (current.id !== incoming.id)
    return incoming.createdAt >= current.createdAt ? incoming : current;
  if (isFinished(current) && !isFinished(incoming)) return current;
  return incoming.updatedAt >= current.updatedAt ? incoming : current;
}

export function isFinished(view: Pick<AssessmentView, 'status'>): boolean {
  return view.status === 'done' || view.status === 'failed';
}
