import { Injectable, inject } from '@angular/core';
import type { AssessmentDisplay } from '@emberline/shared';
import { catchError, shareReplay, throwError, type Observable } from 'rxjs';
import { ZoneDisplayApi } from '../../imaging/viewer/assessment/zone-display-api';

/**
 * The display bodies (zone masks, tumour surface margins) of finished assessments, read once
 * each: an assessment is a frozen record, so what was read stays true. A failed read is
 * forgotten, so that the next look tries again.
 */
@Injectable({ providedIn: 'root' })
export class AssessmentDisplays {
  private readonly api = inject(ZoneDisplayApi);
  private readonly reads = new Map<string, Observable<AssessmentDisplay>>();

  of(assessmentId: string): Observable<AssessmentDisplay> {
    const known = this.reads.get(assessmentId);
    if (known) return known;
    const read = this.api.display(assessmentId).pipe(
      catchError((error: unknown) => {
        this.reads.delete(assessmentId);
        return throwError(() => error);
      }),
      shareReplay({ bufferSize: 1, refCount: false }),
    );
    this.reads.set(assessmentId, read);
    return read;
  }
}
