import { albiResult, type AlbiResult } from './albi';
import { BCLC_CHILD_PUGH_UNKNOWN_REASON, suggestBclcStage, type BclcSuggestion } from './bclc';
import {
  ASCITES_VALUES,
  childPughScore,
  ENCEPHALOPATHY_VALUES,
  type Ascites,
  type ChildPughResult,
  type Encephalopathy,
} from './child-pugh';
import { MELD_NA_APPLIES_ABOVE, meldNaScore, meldScore, type MeldInput } from './meld';
import { albuminToGL, bilirubinToUmolL } from './units';

/**
 * What the case file holds for the liver-function scores. Any value may be missing
 * (undefined or null); the scores that need it are then null with a reason.
 */
export interface LiverScoreInput {
  /** Serum total bilirubin, mg/dL. */
  bilirubinMgDl?: number | null;
  /** Serum albumin, g/dL. */
  albuminGDl?: number | null;
  /** International normalised ratio, no unit. */
  inr?: number | null;
  /** Serum creatinine, mg/dL. */
  creatinineMgDl?: number | null;
  /** Serum sodium, mmol/L. */
  sodiumMmolL?: number | null;
  ascites?: Ascites | null;
  encephalopathy?: Encephalopathy | null;
  /** Dialysis at least twice in the past seven days (see `MeldInput`). */
  dialysisTwiceInPastWeek?: boolean | null;
  /** Longest diameter of each lesion, mm; the number of entries is the number of lesions. */
  lesionDiametersMm: readonly number[];
  /** ECOG performance status, an integer 0–4. */
  ecogPerformanceStatus?: number | null;
  hasVascularInvasion?: boolean | null;
  hasExtrahepaticSpread?: boolean | null;
}

/** Name of a score in `LiverScores`. */
export type LiverScoreName = 'meld' | 'meldNa' | 'childPugh' | 'albi' | 'bclc';

/** Every liver-function score Emberline shows, each null when its inputs are missing. */
export interface LiverScores {
  meld: number | null;
  meldNa: number | null;
  childPugh: ChildPughResult | null;
  /** ALBI score rounded to 3 decimals, and the grade of that rounded score. */
  albi: AlbiResult | null;
  /** Only ever a suggestion; it carries its own caution text. */
  bclc: BclcSuggestion | null;
  /** Why a score is null, by score name: which inputs are missing. */
  unavailable: Partial<Record<LiverScoreName, string>>;
}

type Reading<T> =
  { isUsable: true; value: T } | { isUsable: false; label: string; problem: string };

const NOT_RECORDED = 'not recorded';

function readNumber(
  label: string,
  value: number | null | undefined,
  mustExceedZero = false,
): Reading<number> {
  if (value === undefined || value === null) {
    return { isUsable: false, label, problem: NOT_RECORDED };
  }
  const isUsable = Number.isFinite(value) && (mustExceedZero ? value > 0 : value >= 0);
  if (!isUsable) {
    const rule = mustExceedZero ? 'a finite number above 0' : 'a finite number of at least 0';
    return { isUsable: false, label, problem: `${value} is not ${rule}` };
  }
  return { isUsable: true, value };
}

function readChoice<T extends string>(
  label: string,
  value: T | null | undefined,
  allowed: readonly T[],
): Reading<T> {
  if (value === undefined || value === null) {
    return { isUsable: false, label, problem: NOT_RECORDED };
  }
  if (!allowed.includes(value)) {
    return {
      isUsable: false,
      label,
      problem: `${String(value)} is not one of ${allowed.join(', ')}`,
    };
  }
  return { isUsable: true, value };
}

function readBoolean(label: string, value: boolean | null | undefined): Reading<boolean> {
  if (value === true || value === false) {
    return { isUsable: true, value };
  }
  return { isUsable: false, label, problem: NOT_RECORDED };
}

/** "Not recorded: bilirubin, INR. Not usable: albumin (-1 is not ...)." */
function describeProblems(readings: readonly Reading<unknown>[]): string {
  const notRecorded: string[] = [];
  const notUsable: string[] = [];
  for (const reading of readings) {
    if (reading.isUsable) continue;
    if (reading.problem === NOT_RECORDED) {
      notRecorded.push(reading.label);
    } else {
      notUsable.push(`${reading.label} (${reading.problem})`);
    }
  }
  return [
    notRecorded.length > 0 ? `Not recorded: ${notRecorded.join(', ')}.` : null,
    notUsable.length > 0 ? `Not usable: ${notUsable.join(', ')}.` : null,
  ]
    .filter((sentence): sentence is string => sentence !== null)
    .join(' ');
}

type Scored<T> = { value: T; reason: null } | { value: null; reason: string };

function readMeldInput(input: LiverScoreInput): Scored<MeldInput> {
  const creatinine = readNumber('creatinine', input.creatinineMgDl);
  const bilirubin = readNumber('bilirubin', input.bilirubinMgDl);
  const inr = readNumber('INR', input.inr);
  // At 4.0 mg/dL or more creatinine is already at its cap, so dialysis cannot change MELD.
  const isDialysisIrrelevant = creatinine.isUsable && creatinine.value >= 4;
  const dialysis: Reading<boolean> = isDialysisIrrelevant
    ? { isUsable: true, value: false }
    : readBoolean('dialysis in the past week', input.dialysisTwiceInPastWeek);
  if (creatinine.isUsable && bilirubin.isUsable && inr.isUsable && dialysis.isUsable) {
    const meldInput: MeldInput = {
      creatinineMgDl: creatinine.value,
      bilirubinMgDl: bilirubin.value,
      inr: inr.value,
      dialysisTwiceInPastWeek: dialysis.value,
    };
    return { value: meldInput, reason: null };
  }
  return { value: null, reason: describeProblems([creatinine, bilirubin, inr, dialysis]) };
}

function computeMeld(meldInput: Scored<MeldInput>): Scored<number> {
  return meldInput.value === null ? meldInput : { value: meldScore(meldInput.value), reason: null };
}

/**
 * MELD-Na from the same values as MELD plus sodium. Sodium only enters above MELD 11, so at 11
 * or below MELD-Na is MELD even when sodium is not recorded (a recorded but unusable sodium
 * still makes MELD-Na unavailable).
 */
function computeMeldNa(input: LiverScoreInput, meldInput: Scored<MeldInput>): Scored<number> {
  const sodium = readNumber('sodium', input.sodiumMmolL, true);
  if (meldInput.value === null) {
    const sodiumProblem = sodium.isUsable ? '' : ` ${describeProblems([sodium])}`;
    return { value: null, reason: `${meldInput.reason}${sodiumProblem}` };
  }
  if (sodium.isUsable) {
    return { value: meldNaScore({ ...meldInput.value, sodiumMmolL: sodium.value }), reason: null };
  }
  const meld = meldScore(meldInput.value);
  if (sodium.problem === NOT_RECORDED && meld <= MELD_NA_APPLIES_ABOVE) {
    return { value: meld, reason: null };
  }
  return { value: null, reason: describeProblems([sodium]) };
}

function computeChildPugh(input: LiverScoreInput): Scored<ChildPughResult> {
  const bilirubin = readNumber('bilirubin', input.bilirubinMgDl);
  const albumin = readNumber('albumin', input.albuminGDl);
  const inr = readNumber('INR', input.inr);
  const ascites = readChoice('ascites', input.ascites, ASCITES_VALUES);
  const encephalopathy = readChoice('encephalopathy', input.encephalopathy, ENCEPHALOPATHY_VALUES);
  if (
    bilirubin.isUsable &&
    albumin.isUsable &&
    inr.isUsable &&
    ascites.isUsable &&
    encephalopathy.isUsable
  ) {
    const result = childPughScore({
      bilirubinMgDl: bilirubin.value,
      albuminGDl: albumin.value,
      inr: inr.value,
      ascites: ascites.value,
      encephalopathy: encephalopathy.value,
    });
    return { value: result, reason: null };
  }
  return {
    value: null,
    reason: describeProblems([bilirubin, albumin, inr, ascites, encephalopathy]),
  };
}

function computeAlbi(input: LiverScoreInput): Scored<AlbiResult> {
  // ALBI takes the logarithm of bilirubin, so 0 is unusable here though MELD accepts it.
  const bilirubin = readNumber('bilirubin', input.bilirubinMgDl, true);
  const albumin = readNumber('albumin', input.albuminGDl);
  if (bilirubin.isUsable && albumin.isUsable) {
    const result = albiResult({
      bilirubinUmolL: bilirubinToUmolL({ value: bilirubin.value, unit: 'mg/dL' }),
      albuminGL: albuminToGL({ value: albumin.value, unit: 'g/dL' }),
    });
    return { value: result, reason: null };
  }
  return { value: null, reason: describeProblems([bilirubin, albumin]) };
}

function computeBclc(
  input: LiverScoreInput,
  childPugh: Scored<ChildPughResult>,
): Scored<BclcSuggestion> {
  const outcome = suggestBclcStage({
    noduleDiametersMm: input.lesionDiametersMm,
    ecogPerformanceStatus: input.ecogPerformanceStatus,
    hasVascularInvasion: input.hasVascularInvasion,
    hasExtrahepaticSpread: input.hasExtrahepaticSpread,
    childPughClass: childPugh.value === null ? null : childPugh.value.class,
  });
  if (outcome.suggestion !== null) {
    return { value: outcome.suggestion, reason: null };
  }
  const isChildPughTheCause =
    outcome.reason === BCLC_CHILD_PUGH_UNKNOWN_REASON && childPugh.value === null;
  const reason = isChildPughTheCause
    ? `${outcome.reason} Child-Pugh: ${childPugh.reason}`
    : outcome.reason;
  return { value: null, reason };
}

/**
 * Computes MELD, MELD-Na, Child-Pugh, ALBI and a BCLC stage suggestion from one set of values.
 * Units: bilirubin and creatinine mg/dL, albumin g/dL, sodium mmol/L, lesion diameters mm
 * (convert with `units.ts` first). A score whose inputs are missing or unusable is null, and
 * `unavailable` names those inputs; nothing is assumed in their place.
 */
export function computeLiverScores(input: LiverScoreInput): LiverScores {
  const meldInput = readMeldInput(input);
  const meld = computeMeld(meldInput);
  const meldNa = computeMeldNa(input, meldInput);
  const childPugh = computeChildPugh(input);
  const albi = computeAlbi(input);
  const bclc = computeBclc(input, childPugh);
  const unavailable: Partial<Record<LiverScoreName, string>> = {};
  if (meld.reason !== null) unavailable.meld = meld.reason;
  if (meldNa.reason !== null) unavailable.meldNa = meldNa.reason;
  if (childPugh.reason !== null) unavailable.childPugh = childPugh.reason;
  if (albi.reason !== null) unavailable.albi = albi.reason;
  if (bclc.reason !== null) unavailable.bclc = bclc.reason;
  return {
    meld: meld.value,
    meldNa: meldNa.value,
    childPugh: childPugh.value,
    albi: albi.value,
    bclc: bclc.value,
    unavailable,
  };
}
