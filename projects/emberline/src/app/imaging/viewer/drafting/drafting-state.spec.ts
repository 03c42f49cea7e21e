import {
  createPlanSchema,
  maximumApplicatorsPerPlan,
  type ApplicatorProfileView,
} from '@emberline/shared';
import {
  addApplicator,
  beginDrag,
  draftOfPlan,
  draftProblems,
  draftStep,
  dragTo,
  endDrag,
  newDraft,
  placePoint,
  placementsOf,
  profileLimits,
  removeApplicator,
  selectApplicator,
  setSettings,
} from './drafting-state';

const profile: ApplicatorProfileView = {
  id: '0b8a1f52-43a5-4c1e-9d6f-7e2b3c4d5e6f',
  name: 'Test microwave 14 G',
  modality: 'microwave',
  gaugeG: 14,
  workingLengthMm: 150,
  activeLengthMm: 20,
  zoneTable: [
    { powerW: 60, timeS: 300, zoneLengthMm: 35, zoneWidthMm: 25, tipOffsetMm: 5 },
    { powerW: 100, timeS: 600, zoneLengthMm: 50, zoneWidthMm: 38, tipOffsetMm: 6 },
  ],
  zoneTableSource: 'manufacturer',
  zoneTableReference: null,
  version: 1,
  notes: null,
  isRetired: false,
  createdAt: '2026-01-01T00:00:00.000Z',
  updatedAt: '2026-01-01T00:00:00.000Z',
};
const settings = { profileId: profile.id, powerW: 60, timeS: 300 };

describe('drafting a needle plan', () => {
  it('places the target first, then the entry, then waits for handles to be dragged', () => {
    let state = newDraft(settings);
    expect(draftStep(state)).toBe('place-target');
    state = placePoint(state, [1, 2, 3]);
    expect(draftStep(state)).toBe('place-entry');
    state = placePoint(state, [40, 2, 3]);
    expect(draftStep(state)).toBe('adjust');
    const placed = placePoint(state, [99, 99, 99]);
    expect(placed).toBe(state);
    expect(state.applicators[0]).toMatchObject({ targetLps: [1, 2, 3], entryLps: [40, 2, 3] });
  });

  it('moves only the held handle while dragging and lets go at the end', () => {
    let state = placePoint(placePoint(newDraft(settings), [0, 0, 0]), [50, 0, 0]);
    state = beginDrag(state, { applicator: 0, end: 'entry' });
    state = dragTo(state, [60, 5, 0]);
    state = dragTo(state, [70, 5, 0]);
    state = endDrag(state);
    expect(state.drag).toBeNull();
    expect(state.applicators[0].entryLps).toEqual([70, 5, 0]);
    expect(state.applicators[0].targetLps).toEqual([0, 0, 0]);
    expect(dragTo(state, [1, 1, 1])).toBe(state);
  });

  it('cannot take hold of a handle that is not placed', () => {
    const state = newDraft(settings);
    expect(beginDrag(state, { applicator: 0, end: 'target' }).drag).toBeNull();
  });

  it('adds applicators with the selected settings up to the plan maximum, and removes them', () => {
    let state = placePoint(placePoint(newDraft(settings), [0, 0, 0]), [50, 0, 0]);
    state = addApplicator(state);
    expect(state.selected).toBe(1);
    expect(state.applicators[1]).toMatchObject({ ...settings, targetLps: null, entryLps: null });
    for (let count = 0; count < 10; count++) state = addApplicator(state);
    expect(state.applicators).toHaveLength(maximumApplicatorsPerPlan);
    state = selectApplicator(state, 3);
    state = removeApplicator(state, 1);
    expect(state.selected).toBe(2);
    expect(state.applicators).toHaveLength(maximumApplicatorsPerPlan - 1);
    let single = newDraft(settings);
    single = removeApplicator(placePoint(single, [1, 1, 1]), 0);
    expect(single.applicators).toHaveLength(1);
    expect(single.applicators[0].targetLps).toBeNull();
  });

  it('takes power and time within the zone table range only', () => {
    expect(profileLimits(profile)).toEqual({
      powerW: { min: 60, max: 100 },
      timeS: { min: 300, max: 600 },
    });
    let state = placePoint(placePoint(newDraft(settings), [0, 0, 0]), [50, 0, 0]);
    expect(draftProblems(state, [profile])).toEqual([]);
    state = setSettings(state, { powerW: 120, timeS: null });
    expect(draftProblems(state, [profile])).toEqual([
      'Applicator 1: the power (W) must lie between 60 and 100.',
      'Applicator 1: enter the time (s).',
    ]);
    expect(placementsOf(state, [profile])).toBeNull();
  });

  it('refuses an entry closer than 1 mm to the target, as the plans schema does', () => {
    const state = placePoint(placePoint(newDraft(settings), [0, 0, 0]), [0.5, 0, 0]);
    expect(draftProblems(state, [profile])).toEqual([
      'Applicator 1: the entry must lie at least 1 mm from the target.',
    ]);
  });

  it('builds a body the shared create-plan schema accepts', () => {
    const state = placePoint(placePoint(newDraft(settings), [-40, 10, 5]), [-90, -20, 15]);
    const applicators = placementsOf(state, [profile]);
    const parsed = createPlanSchema.safeParse({
      name: 'Segment VIII, lateral approach',
      seriesId: '6f1c2d3e-4b5a-4c6d-8e7f-9a0b1c2d3e4f',
      applicators,
    });
    expect(parsed.success).toBe(true);
  });

  it('opens a saved plan with its applicators placed', () => {
    const state = draftOfPlan({
      id: 'plan-1',
      applicators: [
        {
          entry: [1, 2, 3],
          target: [4, 5, 6],
          profileId: profile.id,
          profileName: profile.name,
          powerW: 80,
          timeS: 400,
        },
      ],
    });
    expect(state.planId).toBe('plan-1');
    expect(draftStep(state)).toBe('adjust');
    expect(state.applicators[0]).toEqual({
      entryLps: [1, 2, 3],
      targetLps: [4, 5, 6],
      profileId: profile.id,
      powerW: 80,
      timeS: 400,
    });
  });
});
