import { caseStatuses, type CaseStatus } from '@emberline/shared';
import { ConflictError } from '../../common/errors';
import type { ClinicalCase } from './case.entity';

const decidedAt = caseStatuses.indexOf('decided');

/**
 * Whether the case's record may still change: not once the board has decided it (`decided` and
 * every later state). The signed decision rests on the record as it stood, so from then on a
 * correction is a signed amendment to the decision, never an edit of what the board saw.
 */
export function isCaseOpenForChanges(status: CaseStatus): boolean {
  return caseStatuses.indexOf(status) < decidedAt;
}

/**
 * The one guard every change to a case's record goes through (summary, lesions, labs, series,
 * structures, plans, assessment requests): 409 once the case is decided. Called after the
 * caller's own access checks, so that someone who may not change the case at all still hears
 * 404 or 403.
 */
export function assertCaseOpenForChanges(found: Pick<ClinicalCase, 'status'>): void {
  if (!isCaseOpenForChanges(found.status)) {
    throw new ConflictError(
      'The case is decided; its record is read-only. ' +
        'Record a correction as an amendment to the decision.',
    );
  }
}
