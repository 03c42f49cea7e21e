import { describe, expect, it } from 'vitest';
import {
  BCLC_CAUTION,
  BCLC_CHILD_PUGH_UNKNOWN_REASON,
  isLiverFunctionPreserved,
  suggestBclcStage,
  type BclcInput,
} from './bclc';

const REIG_2022 = 'Reig M et al., J Hepatol 2022;76:681';

/** Child-Pugh A, ECOG 0, no invasion or spread: only the tumour burden decides. */
function preserved(noduleDiametersMm: number[]): BclcInput {
  return {
    noduleDiametersMm,
    ecogPerformanceStatus: 0,
    hasVascularInvasion: false,
    hasExtrahepaticSpread: false,
    childPughClass: 'A',
  };
}

function stageOf(input: BclcInput): string | null {
  return suggestBclcStage(input).suggestion?.stage ?? null;
}

describe(`tumour burden with preserved liver function and ECOG 0, ${REIG_2022}`, () => {
  it.each([
    { diametersMm: [15], stage: '0', why: 'single nodule ≤ 2 cm' },
    { diametersMm: [20], stage: '0', why: 'single nodule of exactly 2 cm (≤ 2 cm)' },
    { diametersMm: [21], stage: 'A', why: 'single nodule over 2 cm' },
    { diametersMm: [85], stage: 'A', why: 'single nodule of any size' },
    { diametersMm: [30, 25, 10], stage: 'A', why: '3 nodules each ≤ 3 cm' },
    { diametersMm: [12, 8], stage: 'A', why: '2 nodules each ≤ 3 cm' },
    { diametersMm: [31, 10], stage: 'B', why: '2 nodules, one over 3 cm: multinodular' },
    { diametersMm: [10, 10, 10, 10], stage: 'B', why: 'more than 3 nodules: multinodular' },
  ])('suggests stage $stage for $why', ({ diametersMm, stage }) => {
    expect(stageOf(preserved(diametersMm))).toBe(stage);
  });
});

describe(`advanced stage C, ${REIG_2022}`, () => {
  it.each([
    { name: 'vascular invasion with ECOG 0', change: { hasVascularInvasion: true } },
    {
      name: 'extrahepatic spread with ECOG 2',
      change: { hasExtrahepaticSpread: true, ecogPerformanceStatus: 2 },
    },
    {
      name: 'vascular invasion while extrahepatic spread is not recorded',
      change: { hasVascularInvasion: true, hasExtrahepaticSpread: null },
    },
  ])('suggests C for $name', ({ change }) => {
    expect(stageOf({ ...preserved([40]), ...change })).toBe('C');
  });

  it('suggests C for ECOG 1 with a small single nodule (ECOG 1–2 rule from memory)', () => {
    expect(stageOf({ ...preserved([15]), ecogPerformanceStatus: 1 })).toBe('C');
  });

  it('names both findings in the rationale when both are present', () => {
    const outcome = suggestBclcStage({
      ...preserved([40]),
      hasVascularInvasion: true,
      hasExtrahepaticSpread: true,
    });
    expect(outcome.suggestion?.rationale).toContain('Vascular invasion and extrahepatic spread');
  });
});

describe(`end stage D (ECOG 3–4 and Child-Pugh C as end stage from memory), ${REIG_2022}`, () => {
  it.each([
    { name: 'ECOG 3 with Child-Pugh A', change: { ecogPerformanceStatus: 3 } },
    {
      name: 'ECOG 4 with Child-Pugh unknown',
      change: { ecogPerformanceStatus: 4, childPughClass: null },
    },
    { name: 'Child-Pugh C with ECOG 0', change: { childPughClass: 'C' as const } },
  ])('suggests D for $name', ({ change }) => {
    expect(stageOf({ ...preserved([15]), ...change })).toBe('D');
  });
});

describe('every suggestion is a suggestion only (product rule)', () => {
  it.each([{ diametersMm: [15] }, { diametersMm: [40] }, { diametersMm: [10, 10, 10, 10] }])(
    'carries the fixed caution, its label and a rationale for $diametersMm mm',
    ({ diametersMm }) => {
      const suggestion = suggestBclcStage(preserved(diametersMm)).suggestion;
      expect(suggestion?.caution).toBe(BCLC_CAUTION);
      expect(suggestion?.caution).toContain('the board and the treating team decide');
      expect(suggestion?.label).toMatch(/stage/);
      expect(suggestion?.rationale).toContain(`${Math.max(...diametersMm)} mm`);
    },
  );

  it('labels stage 0 as very early', () => {
    expect(suggestBclcStage(preserved([15])).suggestion?.label).toBe('Very early stage');
  });
});

describe('no suggestion without the inputs, never a guess (product rule)', () => {
  it.each([
    { name: 'no nodules recorded', change: { noduleDiametersMm: [] }, reason: 'No nodules' },
    { name: 'a diameter of 0 mm', change: { noduleDiametersMm: [0] }, reason: 'diameter' },
    {
      name: 'a diameter that is not a number',
      change: { noduleDiametersMm: [Number.NaN] },
      reason: 'diameter',
    },
    { name: 'ECOG missing', change: { ecogPerformanceStatus: undefined }, reason: 'ECOG' },
    { name: 'ECOG null', change: { ecogPerformanceStatus: null }, reason: 'ECOG' },
    { name: 'ECOG 5', change: { ecogPerformanceStatus: 5 }, reason: 'ECOG' },
    { name: 'ECOG 1.5', change: { ecogPerformanceStatus: 1.5 }, reason: 'ECOG' },
    {
      name: 'Child-Pugh unknown',
      change: { childPughClass: null },
      reason: BCLC_CHILD_PUGH_UNKNOWN_REASON,
    },
    {
      name: 'vascular invasion not recorded',
      change: { hasVascularInvasion: null },
      reason: 'vascular invasion',
    },
    {
      name: 'extrahepatic spread not recorded',
      change: { hasExtrahepaticSpread: undefined },
      reason: 'extrahepatic spread',
    },
  ])('gives none, with a reason, for $name', ({ change, reason }) => {
    const outcome = suggestBclcStage({ ...preserved([15]), ...change });
    expect(outcome.suggestion).toBeNull();
    expect(outcome.reason).toContain(reason);
  });

  it('gives none for Child-Pugh B, counted neither as preserved nor as end stage', () => {
    const outcome = suggestBclcStage({ ...preserved([15]), childPughClass: 'B' });
    expect(outcome.suggestion).toBeNull();
    expect(outcome.reason).toContain('Child-Pugh B');
  });
});

describe('preserved liver function is Child-Pugh A (Emberline rule)', () => {
  it.each([
    { childPughClass: 'A', expected: true },
    { childPughClass: 'B', expected: false },
    { childPughClass: 'C', expected: false },
  ] as const)('counts Child-Pugh $childPughClass as preserved: $expected', (row) => {
    expect(isLiverFunctionPreserved(row.childPughClass)).toBe(row.expected);
  });
});
