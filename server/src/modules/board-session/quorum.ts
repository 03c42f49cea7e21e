import {
  specialtyLabels,
  type PresentMember,
  type QuorumView,
  type Specialty,
} from '@emberline/shared';

/**
 * Quorum as the board defines it: every specialty the board requires is held by at least one
 * member attending (in the room, or by voting over the API). A board that requires none is
 * quorate with any member attending. The explanation says, in words, what is missing.
 */
export function quorumOf(
  required: readonly Specialty[],
  attending: readonly PresentMember[],
): QuorumView {
  const held = new Set(attending.map((member) => member.specialty));
  const missing = required.filter((specialty) => !held.has(specialty));
  const presentCount = attending.length;
  let explanation: string;
  if (presentCount === 0) {
    explanation = 'Not met: nobody is attending.';
  } else if (missing.length) {
    explanation = `Not met: missing ${missing.map((specialty) => specialtyLabels[specialty]).join(', ')}.`;
  } else if (required.length) {
    explanation = `Met: ${required.map((specialty) => specialtyLabels[specialty]).join(', ')} present.`;
  } else {
    explanation = 'Met: the board requires no particular specialty.';
  }
  return {
    isMet: presentCount > 0 && missing.length === 0,
    required: [...required],
    missing,
    presentCount,
    explanation,
  };
}
