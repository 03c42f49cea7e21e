/**
 * The presenter's side of a tumour's lesion link (PATCH /structures/:id): confirming the
 * suggested lesion, choosing another lesion of the case or none, or releasing the link back to
 * the suggestion. The rules: only a tumour is linked; only a lesion of the structure's own case;
 * a lesion confirmed for one structure of a series is not confirmed for another of it (release
 * that one first). Nothing is flushed here.
 */
import { ref } from '@mikro-orm/core';
import { lesionLabel, structureKindLabels, type UpdateStructure } from '@emberline/shared';
import { ConflictError, ValidationError } from '../../common/errors';
import type { Lesion } from '../cases/lesion.entity';
import type { Structure } from './structure.entity';

export interface LinkOutcome {
  /** The stored link or its confirmation changed. */
  isChanged: boolean;
  /** The other tumours' suggestions may change with it (a lesion taken or freed, a release). */
  needsSuggestion: boolean;
}

/**
 * Applies the link fields of `request` to `structure`; `siblings` are all the structures of its
 * series, `caseLesions` the lesions of its case. Throws a ConflictError (409) for a structure
 * that is not a tumour or a lesion confirmed for a sibling, a ValidationError (400) for a lesion
 * that is not the case's.
 */
export function changeLesionLink(
  structure: Structure,
  siblings: readonly Structure[],
  caseLesions: readonly Lesion[],
  request: Pick<UpdateStructure, 'lesionId' | 'isLesionConfirmed'>,
): LinkOutcome {
  if (request.isLesionConfirmed === undefined) return { isChanged: false, needsSuggestion: false };
  if (structure.kind !== 'tumour') {
    const kind = structure.kind ? structureKindLabels[structure.kind].toLowerCase() : 'not mapped';
    throw new ConflictError(
      `Only a tumour is linked to a lesion of the Summary; label ${structure.labelValue} ` +
        `(“${structure.name}”) is ${kind}. Set its kind to tumour first.`,
    );
  }
  if (!request.isLesionConfirmed) {
    const wasConfirmed = structure.isLesionConfirmed;
    structure.isLesionConfirmed = false;
    return { isChanged: wasConfirmed, needsSuggestion: true };
  }
  const lesionId = request.lesionId ?? null;
  let lesion: Lesion | null = null;
  if (lesionId !== null) {
    lesion = caseLesions.find((candidate) => candidate.id === lesionId) ?? null;
    if (!lesion) {
      // The same answer for an unknown lesion and another case's: nothing leaks across cases.
      const message = 'The lesion is not one of this case’s lesions (see the case’s Summary).';
      throw new ValidationError(`lesionId: ${message}`, [{ path: 'lesionId', message }]);
    }
    const holder = siblings.find(
      (other) =>
        other.id !== structure.id && other.isLesionConfirmed && other.lesion?.id === lesionId,
    );
    if (holder) {
      throw new ConflictError(
        `The lesion ${lesionLabel(lesion)} is already confirmed for label ${holder.labelValue} ` +
          `(“${holder.name}”) of this series; release that link first.`,
      );
    }
  }
  const previousId = structure.lesion?.id ?? null;
  const wasConfirmed = structure.isLesionConfirmed;
  structure.lesion = lesion ? ref(lesion) : null;
  structure.isLesionConfirmed = true;
  return {
    isChanged: previousId !== lesionId || !wasConfirmed,
    needsSuggestion: previousId !== lesionId,
  };
}
