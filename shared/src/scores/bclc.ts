import type { ChildPughClass } from './child-pugh';

/**
 * A BCLC stage suggestion after the 2022 update (Reig M et al., J Hepatol 2022;76:681).
 * Only ever a suggestion: the board and the treating team decide, and every suggestion
 * carries `BCLC_CAUTION`.
 *
 * From the cited source: 0 very early is a single nodule ≤ 2 cm with preserved liver function
 * and ECOG 0; A early is a single nodule, or up to 3 nodules each ≤ 3 cm;
 * B intermediate is multinodular (three subgroups); C advanced is portal invasion or
 * extrahepatic spread, ECOG 1–2; D is end stage.
 *
 * From memory (to verify against the paper):
 * - ECOG 3–4 means stage D whatever the tumour burden or liver function.
 * - Stages 0, A and B require ECOG 0; ECOG 1–2 with preserved liver function means stage C,
 *   the paper asking that the reduced performance be due to the cancer (the board judges).
 * - Stage C allows ECOG 0–2 when there is vascular invasion or extrahepatic spread.
 * - End-stage liver function means stage D; Emberline takes Child-Pugh C as end stage.
 * - The paper qualifies "preserved liver function" further (for example by ascites); Emberline
 *   takes Child-Pugh A as preserved, and Child-Pugh B as neither preserved nor end stage, for
 *   which no stage is suggested: the paper leaves those patients to clinical judgement.
 * - The three subgroups of stage B turn on tumour burden and transplant eligibility, which
 *   this function does not judge.
 *
 * Size limits are inclusive: 20 mm fits "≤ 2 cm", 30 mm fits "≤ 3 cm".
 */

/** BCLC stage. */
export type BclcStage = '0' | 'A' | 'B' | 'C' | 'D';

/** What the suggestion is made from. */
export interface BclcInput {
  /** Longest diameter of each nodule, mm; the number of entries is the number of nodules. */
  noduleDiametersMm: readonly number[];
  /** ECOG performance status, an integer 0–4. */
  ecogPerformanceStatus?: number | null;
  /** Portal or other macrovascular invasion on imaging. */
  hasVascularInvasion?: boolean | null;
  /** Extrahepatic spread (nodes or metastases). */
  hasExtrahepaticSpread?: boolean | null;
  /** Child-Pugh class, or null when it cannot be computed. */
  childPughClass: ChildPughClass | null;
}

/** A stage suggestion with its reason in a sentence and the fixed caution. */
export interface BclcSuggestion {
  stage: BclcStage;
  label: string;
  rationale: string;
  caution: string;
}

/** Either a suggestion, or why none can be made. */
export type BclcOutcome =
  { suggestion: BclcSuggestion; reason: null } | { suggestion: null; reason: string };

/** Shown with every BCLC suggestion. */
export const BCLC_CAUTION =
  'A suggestion from the BCLC 2022 criteria; the board and the treating team decide.';

/** Name of each stage. */
export const BCLC_STAGE_LABELS: Readonly<Record<BclcStage, string>> = {
  '0': 'Very early stage',
  A: 'Early stage',
  B: 'Intermediate stage',
  C: 'Advanced stage',
  D: 'End stage',
};

/** The reason given when the Child-Pugh class is unknown, so callers can say why it is. */
export const BCLC_CHILD_PUGH_UNKNOWN_REASON = 'Child-Pugh class is not known.';

const VERY_EARLY_MAXIMUM_DIAMETER_MM = 20;
const EARLY_MULTIPLE_MAXIMUM_DIAMETER_MM = 30;
const EARLY_MAXIMUM_NODULES = 3;

/** Whether a Child-Pugh class counts as preserved liver function: Emberline's rule, A only. */
export function isLiverFunctionPreserved(childPughClass: ChildPughClass): boolean {
  return childPughClass === 'A';
}

function suggest(stage: BclcStage, rationale: string): BclcOutcome {
  return {
    suggestion: { stage, label: BCLC_STAGE_LABELS[stage], rationale, caution: BCLC_CAUTION },
    reason: null,
  };
}

function unavailable(reason: string): BclcOutcome {
  return { suggestion: null, reason };
}

function isKnown(value: boolean | null | undefined): value is boolean {
  return value === true || value === false;
}

function stageByTumourBurden(diametersMm: readonly number[]): BclcOutcome {
  const count = diametersMm.length;
  const largestMm = Math.max(...diametersMm);
  const withFunction = 'with Child-Pugh A liver function and ECOG 0';
  if (count === 1 && largestMm <= VERY_EARLY_MAXIMUM_DIAMETER_MM) {
    return suggest(
      '0',
      `A single nodule of ${largestMm} mm (20 mm or less) ${withFunction} fits the very early ` +
        'stage.',
    );
  }
  if (count === 1) {
    return suggest(
      'A',
      `A single nodule of ${largestMm} mm ${withFunction} fits the early stage, which sets no ` +
        'size limit for a single nodule.',
    );
  }
  if (count <= EARLY_MAXIMUM_NODULES && largestMm <= EARLY_MULTIPLE_MAXIMUM_DIAMETER_MM) {
    return suggest(
      'A',
      `${count} nodules, the largest ${largestMm} mm (each 30 mm or less), ${withFunction} fit ` +
        'the early stage.',
    );
  }
  const burden =
    count > EARLY_MAXIMUM_NODULES
      ? `${count} nodules (more than 3), the largest ${largestMm} mm,`
      : `${count} nodules with the largest ${largestMm} mm (over 30 mm)`;
  return suggest(
    'B',
    `${burden} ${withFunction} fit the intermediate stage; which of its subgroups applies ` +
      'depends on tumour burden and transplant eligibility, for the board to weigh.',
  );
}

/**
 * Suggests a BCLC 2022 stage. Diameters in mm; ECOG an integer 0–4. Returns a reason instead
 * of a suggestion when a needed input is missing or unusable (no nodules recorded, ECOG
 * missing, Child-Pugh unknown, invasion or spread not recorded) or when the criteria do not
 * settle the stage (Child-Pugh B); it never guesses.
 */
export function suggestBclcStage(input: BclcInput): BclcOutcome {
  const diametersMm = input.noduleDiametersMm;
  if (diametersMm.length === 0) {
    return unavailable('No nodules are recorded.');
  }
  if (diametersMm.some((diameterMm) => !Number.isFinite(diameterMm) || diameterMm <= 0)) {
    return unavailable('Every nodule needs a longest diameter above 0 mm.');
  }
  const ecog = input.ecogPerformanceStatus;
  if (ecog === undefined || ecog === null) {
    return unavailable('ECOG performance status is not recorded.');
  }
  if (!Number.isInteger(ecog) || ecog < 0 || ecog > 4) {
    return unavailable(`ECOG performance status must be an integer from 0 to 4, got ${ecog}.`);
  }
  if (ecog >= 3) {
    return suggest(
      'D',
      `ECOG ${ecog} (3 or 4) places the patient in the end stage whatever the tumour burden ` +
        'or liver function.',
    );
  }
  const childPughClass = input.childPughClass;
  if (childPughClass === null) {
    return unavailable(BCLC_CHILD_PUGH_UNKNOWN_REASON);
  }
  if (childPughClass === 'C') {
    return suggest(
      'D',
      'Child-Pugh C is taken as end-stage liver function, which places the patient in the end ' +
        'stage; transplant eligibility is weighed separately.',
    );
  }
  if (!isLiverFunctionPreserved(childPughClass)) {
    return unavailable(
      'Child-Pugh B counts neither as preserved liver function (Child-Pugh A) nor as end stage; ' +
        'the BCLC 2022 criteria leave this to clinical judgement, so no stage is suggested.',
    );
  }
  const { hasVascularInvasion, hasExtrahepaticSpread } = input;
  if (hasVascularInvasion === true || hasExtrahepaticSpread === true) {
    const findings = [
      hasVascularInvasion === true ? 'vascular invasion' : null,
      hasExtrahepaticSpread === true ? 'extrahepatic spread' : null,
    ].filter((finding): finding is string => finding !== null);
    const found = findings.join(' and ');
    return suggest(
      'C',
      `${found[0].toUpperCase()}${found.slice(1)} with Child-Pugh A liver function and ECOG ` +
        `${ecog} fit the advanced stage.`,
    );
  }
  const notRecorded = [
    isKnown(hasVascularInvasion) ? null : 'vascular invasion',
    isKnown(hasExtrahepaticSpread) ? null : 'extrahepatic spread',
  ].filter((finding): finding is string => finding !== null);
  if (notRecorded.length > 0) {
    return unavailable(`Not recorded: ${notRecorded.join(', ')}.`);
  }
  if (ecog > 0) {
    return suggest(
      'C',
      `ECOG ${ecog} with Child-Pugh A liver function fits the advanced stage when the reduced ` +
        'performance is due to the cancer, which the board judges.',
    );
  }
  return stageByTumourBurden(diametersMm);
}
