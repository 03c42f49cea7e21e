/**
 * The drafting of a needle plan in the viewer, as plain immutable state and the steps that
 * change it: place a target, then an entry, on any slice view; drag either handle; add,
 * remove and select applicators; set each one's profile, power and time. Points are patient
 * LPS, millimetres.
 */
import {
  maximumApplicatorsPerPlan,
  minimumApplicatorPathMm,
  vector3,
  type ApplicatorPlacement,
  type ApplicatorProfileView,
  type PlanView,
  type Vec3,
} from '@emberline/shared';

export type DraftEnd = 'target' | 'entry';

export interface DraftApplicator {
  targetLps: Vec3 | null;
  entryLps: Vec3 | null;
  profileId: string | null;
  powerW: number | null;
  timeS: number | null;
}

export interface DraftHandle {
  applicator: number;
  end: DraftEnd;
}

export interface DraftingState {
  /** The saved plan being edited, or null for a new one. */
  planId: string | null;
  applicators: readonly DraftApplicator[];
  /** Index of the applicator the panel edits and the next click places. */
  selected: number;
  /** The handle being dragged, if any. */
  drag: DraftHandle | null;
}

/** What a click on a slice view does next for the selected applicator. */
export type DraftStep = 'place-target' | 'place-entry' | 'adjust';

export interface ApplicatorSettings {
  profileId: string | null;
  powerW: number | null;
  timeS: number | null;
}

const emptySettings: ApplicatorSettings = { profileId: null, powerW: null, timeS: null };

function emptyApplicator(settings: ApplicatorSettings): DraftApplicator {
  return { targetLps: null, entryLps: null, ...settings };
}

/** A new plan: one applicator, nothing placed yet. */
export function newDraft(settings: ApplicatorSettings = emptySettings): DraftingState {
  return { planId: null, applicators: [emptyApplicator(settings)], selected: 0, drag: null };
}

/** A saved plan opened for drafting. */
export function draftOfPlan(plan: Pick<PlanView, 'id' | 'applicators'>): DraftingState {
  return {
    planId: plan.id,
    applicators: plan.applicators.map((applicator) => ({
      targetLps: [...applicator.target],
      entryLps: [...applicator.entry],
      profileId: applicator.profileId,
      powerW: applicator.powerW,
      timeS: applicator.timeS,
    })),
    selected: 0,
    drag: null,
  };
}

export function selectedApplicator(state: DraftingState): DraftApplicator {
  return state.applicators[state.selected];
}

export function draftStep(state: DraftingState): DraftStep {
  const applicator = selectedApplicator(state);
  if (!applicator.targetLps) return 'place-target';
  if (!applicator.entryLps) return 'place-entry';
  return 'adjust';
}

function replaceSelected(state: DraftingState, change: Partial<DraftApplicator>): DraftingState {
  return {
    ...state,
    applicators: state.applicators.map((applicator, index) =>
      index === state.selected ? { ...applicator, ...change } : applicator,
    ),
  };
}

/**
 * A click on a slice view: places the selected applicator's target, then its entry. Once both
 * are placed a click changes nothing (handles are dragged instead).
 */
export function placePoint(state: DraftingState, pointLps: Readonly<Vec3>): DraftingState {
  const step = draftStep(state);
  if (step === 'place-target') return replaceSelected(state, { targetLps: [...pointLps] });
  if (step === 'place-entry') return replaceSelected(state, { entryLps: [...pointLps] });
  return state;
}

/** Takes hold of a placed handle; its applicator becomes the selected one. */
export function beginDrag(state: DraftingState, handle: DraftHandle): DraftingState {
  const applicator = state.applicators[handle.applicator] as DraftApplicator | undefined;
  const point = handle.end === 'target' ? applicator?.targetLps : applicator?.entryLps;
  if (!point) return state;
  return { ...state, selected: handle.applicator, drag: handle };
}

/** Moves the held handle to a point; nothing when no handle is held. */
export function dragTo(state: DraftingState, pointLps: Readonly<Vec3>): DraftingState {
  if (!state.drag) return state;
  const change =
    state.drag.end === 'target' ? { targetLps: [...pointLps] } : { entryLps: [...pointLps] };
  return replaceSelected(state, change as Partial<DraftApplicator>);
}

export function endDrag(state: DraftingState): DraftingState {
  return state.drag ? { ...state, drag: null } : state;
}

export function canAddApplicator(state: DraftingState): boolean {
  return state.applicators.length < maximumApplicatorsPerPlan;
}

/** Adds an applicator with the selected one's settings, unplaced, and selects it. */
export function addApplicator(state: DraftingState): DraftingState {
  if (!canAddApplicator(state)) return state;
  const { profileId, powerW, timeS } = selectedApplicator(state);
  const applicators = [...state.applicators, emptyApplicator({ profileId, powerW, timeS })];
  return { ...state, applicators, selected: applicators.length - 1, drag: null };
}

/** Removes an applicator; a plan keeps at least one (the last one is emptied instead). */
export function removeApplicator(state: DraftingState, index: number): DraftingState {
  if (index < 0 || index >= state.applicators.length) return state;
  if (state.applicators.length === 1) {
    const { profileId, powerW, timeS } = state.applicators[0];
    return { ...state, applicators: [emptyApplicator({ profileId, powerW, timeS })], drag: null };
  }
  const applicators = state.applicators.filter((_, candidate) => candidate !== index);
  const selected =
    state.selected > index ? state.selected - 1 : Math.min(state.selected, applicators.length - 1);
  return { ...state, applicators, selected, drag: null };
}

export function selectApplicator(state: DraftingState, index: number): DraftingState {
  if (index < 0 || index >= state.applicators.length) return state;
  return { ...state, selected: index, drag: null };
}

/** Clears the selected applicator's points, to place them again. */
export function clearPlacement(state: DraftingState): DraftingState {
  return { ...replaceSelected(state, { targetLps: null, entryLps: null }), drag: null };
}

export function setSettings(
  state: DraftingState,
  settings: Partial<ApplicatorSettings>,
): DraftingState {
  return replaceSelected(state, settings);
}

/** The range of power (W) and time (s) a profile's zone table covers. */
export interface ProfileLimits {
  powerW: { min: number; max: number };
  timeS: { min: number; max: number };
}

export function profileLimits(profile: Pick<ApplicatorProfileView, 'zoneTable'>): ProfileLimits {
  const powers = profile.zoneTable.map((row) => row.powerW);
  const times = profile.zoneTable.map((row) => row.timeS);
  return {
    powerW: { min: Math.min(...powers), max: Math.max(...powers) },
    timeS: { min: Math.min(...times), max: Math.max(...times) },
  };
}

/** Settings for a newly chosen profile: its first zone table row. */
export function settingsForProfile(profile: ApplicatorProfileView): ApplicatorSettings {
  const first = profile.zoneTable[0];
  return { profileId: profile.id, powerW: first.powerW, timeS: first.timeS };
}

/**
 * What keeps the draft from being saved, one sentence each, naming the applicator (from 1):
 * unplaced points, a path shorter than the schema's minimum, no profile, power or time missing
 * or outside the profile's zone table range.
 */
export function draftProblems(
  state: DraftingState,
  profiles: readonly ApplicatorProfileView[],
): string[] {
  const problems: string[] = [];
  state.applicators.forEach((applicator, index) => {
    const name = `Applicator ${index + 1}`;
    if (!applicator.targetLps) problems.push(`${name}: place the target.`);
    else if (!applicator.entryLps) problems.push(`${name}: place the entry point.`);
    else if (
      vector3.distance(applicator.entryLps, applicator.targetLps) < minimumApplicatorPathMm
    ) {
      problems.push(
        `${name}: the entry must lie at least ${minimumApplicatorPathMm} mm from the target.`,
      );
    }
    const profile = profiles.find((candidate) => candidate.id === applicator.profileId);
    if (!profile) {
      problems.push(`${name}: choose an applicator profile.`);
      return;
    }
    const limits = profileLimits(profile);
    const check = (value: number | null, what: string, range: { min: number; max: number }) => {
      if (value === null || !Number.isFinite(value)) problems.push(`${name}: enter the ${what}.`);
      else if (value < range.min || value > range.max) {
        problems.push(`${name}: the ${what} must lie between ${range.min} and ${range.max}.`);
      }
    };
    check(applicator.powerW, 'power (W)', limits.powerW);
    check(applicator.timeS, 'time (s)', limits.timeS);
  });
  return problems;
}

/** The applicators as the plans API takes them, or null while the draft has problems. */
export function placementsOf(
  state: DraftingState,
  profiles: readonly ApplicatorProfileView[],
): ApplicatorPlacement[] | null {
  if (draftProblems(state, profiles).length) return null;
  return state.applicators.map((applicator) => ({
    entry: applicator.entryLps as Vec3,
    target: applicator.targetLps as Vec3,
    profileId: applicator.profileId as string,
    powerW: applicator.powerW as number,
    timeS: applicator.timeS as number,
  }));
}
