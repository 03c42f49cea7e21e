import { HttpClient, HttpContext, httpResource, type HttpResourceRef } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type {
  ApplicatorProfileView,
  CreatePlan,
  PlanView,
  SafetyProfileView,
  UpdatePlan,
} from '@emberline/shared';
import type { Observable } from 'rxjs';
import { SHOWS_OWN_ERRORS } from '../core/http-context-tokens';

/** The needle plans of a case and the applicator profiles to draft them with. */
@Injectable({ providedIn: 'root' })
export class PlanApi {
  private readonly http = inject(HttpClient);

  /** The plans of a case; idle while the id is undefined. */
  list(caseId: () => string | undefined): HttpResourceRef<PlanView[] | undefined> {
    return httpResource<PlanView[]>(() => {
      const id = caseId();
      return id ? `/api/cases/${encodeURIComponent(id)}/plans` : undefined;
    });
  }

  /** The profiles a plan may use (retired ones are left out by the server). */
  profiles(
    isWanted: () => boolean = () => true,
  ): HttpResourceRef<ApplicatorProfileView[] | undefined> {
    return httpResource<ApplicatorProfileView[]>(() =>
      isWanted() ? '/api/applicator-profiles' : undefined,
    );
  }

  /**
   * The safety profiles, each at its current version, the default first: what an assessment
   * can be judged by, and the thresholds of the assessments that ran on those versions.
   */
  safetyProfiles(): HttpResourceRef<SafetyProfileView[] | undefined> {
    return httpResource<SafetyProfileView[]>(() => ({
      url: '/api/safety-profiles',
      context: shownBeside(),
    }));
  }

  /** The panel that saves shows the refusal beside the form: no snack bar. */
  create(caseId: string, body: CreatePlan): Observable<PlanView> {
    return this.http.post<PlanView>(`/api/cases/${encodeURIComponent(caseId)}/plans`, body, {
      context: shownBeside(),
    });
  }

  update(planId: string, body: UpdatePlan): Observable<PlanView> {
    return this.http.patch<PlanView>(`/api/plans/${encodeURIComponent(planId)}`, body, {
      context: shownBeside(),
    });
  }

  /**
   * A new draft with the plan's series, applicators and profiles, its name suffixed
   * " (revision N)" (201); the presenting physician of the case only.
   */
  copy(planId: string): Observable<PlanView> {
    return this.http.post<PlanView>(`/api/plans/${encodeURIComponent(planId)}/copy`, null, {
      context: shownBeside(),
    });
  }

  /** Deletes a draft plan, or one whose assessment failed (the server refuses any other). */
  remove(planId: string): Observable<null> {
    return this.http.delete<null>(`/api/plans/${encodeURIComponent(planId)}`, {
      context: shownBeside(),
    });
  }
}

function shownBeside(): HttpContext {
  return new HttpContext().set(SHOWS_OWN_ERRORS, true);
}
