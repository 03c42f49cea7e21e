import { Injectable, computed, inject } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { ActivatedRoute } from '@angular/router';
import type { CaseDetail } from '@emberline/shared';
import { map } from 'rxjs';
import { CaseApi } from './case-api';

/**
 * The case file open on screen, shared by the case file and its sections (provided by `CaseFile`).
 * Every write answers with the whole case, which replaces what is shown.
 */
@Injectable()
export class CaseFileState {
  private readonly route = inject(ActivatedRoute);
  readonly caseId = toSignal(
    this.route.paramMap.pipe(map((params) => params.get('id') ?? undefined)),
  );
  readonly resource = inject(CaseApi).detail(this.caseId);
  readonly detail = computed<CaseDetail | undefined>(() =>
    this.resource.hasValue() ? this.resource.value() : undefined,
  );

  replace(detail: CaseDetail): void {
    this.resource.set(detail);
  }
}
