import { describe, expect, it } from 'vitest';
import { BCLC_CAUTION } from './bclc';
import { computeLiverScores, type LiverScoreInput } from './liver-scores';

/**
 * Normal liver function: MELD 6 (every value below 1 raised to 1, UNOS/OPTN MELD policy),
 * MELD-Na 6 (not applied at MELD 11 or below, Kim WR et al., N Engl J Med 2008;359:1018),
 * Child-Pugh 5 A (Pugh 1973 standard table, attribution from memory), ALBI −2.820 grade 1 for
 * bilirubin 13.68 µmol/L and albumin 42 g/L (Johnson PJ et al., J Clin Oncol 2015;33:550 [C]),
 * BCLC 0 for a single 18 mm nodule with ECOG 0 (Reig M et al., J Hepatol 2022;76:681).
 */
const NORMAL: LiverScoreInput = {
  bilirubinMgDl: 0.8,
  albuminGDl: 4.2,
  inr: 1.0,
  creatinineMgDl: 0.9,
  sodiumMmolL: 140,
  ascites: 'none',
  encephalopathy: 'none',
  dialysisTwiceInPastWeek: false,
  lesionDiametersMm: [18],
  ecogPerformanceStatus: 0,
  hasVascularInvasion: false,
  hasExtrahepaticSpread: false,
};

/**
 * Worked examples computed from the formulas [C]: Cr 1.0, bili 1.5, INR 1.5, Na 135 → MELD 13,
 * MELD-Na 15 (UNOS/OPTN MELD policy; Kim 2008); with albumin 3.0 and mild ascites Child-Pugh
 * 7 B (Pugh 1973 standard table); ALBI for 25.65 µmol/L and 30 g/L is −1.620, grade 2
 * (Johnson 2015 [C]).
 */
const MODERATE: LiverScoreInput = {
  ...NORMAL,
  bilirubinMgDl: 1.5,
  albuminGDl: 3.0,
  inr: 1.5,
  creatinineMgDl: 1.0,
  sodiumMmolL: 135,
  ascites: 'mild',
};

/** MELD 13 as in MODERATE, but albumin 4.2 and no ascites keep Child-Pugh at 5 A. */
const MELD_13_CHILD_PUGH_A: LiverScoreInput = { ...MODERATE, albuminGDl: 4.2, ascites: 'none' };

describe('all five scores from one complete set of values', () => {
  it('scores normal liver function and a small single nodule, with nothing unavailable', () => {
    const scores = computeLiverScores(NORMAL);
    expect(scores).toMatchObject({
      meld: 6,
      meldNa: 6,
      childPugh: { points: 5, class: 'A' },
      albi: { score: -2.82, grade: 1 },
      bclc: { stage: '0', label: 'Very early stage', caution: BCLC_CAUTION },
    });
    expect(scores.unavailable).toEqual({});
  });

  it('scores the moderate worked example and says why BCLC is withheld for Child-Pugh B', () => {
    const scores = computeLiverScores(MODERATE);
    expect(scores.meld).toBe(13);
    expect(scores.meldNa).toBe(15);
    expect(scores.childPugh).toEqual({ points: 7, class: 'B' });
    expect(scores.albi).toEqual({ score: -1.62, grade: 2 });
    expect(scores.bclc).toBeNull();
    expect(scores.unavailable.bclc).toContain('Child-Pugh B');
  });
});

describe('a score whose inputs are missing is null with a reason naming them', () => {
  it.each([
    { field: 'creatinineMgDl', scores: ['meld', 'meldNa'], named: 'creatinine' },
    { field: 'inr', scores: ['meld', 'meldNa', 'childPugh', 'bclc'], named: 'INR' },
    {
      field: 'dialysisTwiceInPastWeek',
      scores: ['meld', 'meldNa'],
      named: 'dialysis in the past week',
    },
    {
      field: 'bilirubinMgDl',
      scores: ['meld', 'meldNa', 'childPugh', 'albi', 'bclc'],
      named: 'bilirubin',
    },
    { field: 'albuminGDl', scores: ['childPugh', 'albi', 'bclc'], named: 'albumin' },
    { field: 'sodiumMmolL', scores: ['meldNa'], named: 'sodium' },
    { field: 'ascites', scores: ['childPugh', 'bclc'], named: 'ascites' },
    { field: 'encephalopathy', scores: ['childPugh', 'bclc'], named: 'encephalopathy' },
    { field: 'ecogPerformanceStatus', scores: ['bclc'], named: 'ECOG' },
    { field: 'hasVascularInvasion', scores: ['bclc'], named: 'vascular invasion' },
    { field: 'hasExtrahepaticSpread', scores: ['bclc'], named: 'extrahepatic spread' },
  ] as const)('withholds $scores when $field is missing', ({ field, scores, named }) => {
    // Sodium only matters above MELD 11; the other inputs are checked on NORMAL (MELD 6).
    const base = field === 'sodiumMmolL' ? MELD_13_CHILD_PUGH_A : NORMAL;
    const result = computeLiverScores({ ...base, [field]: null });
    for (const score of scores) {
      expect(result[score]).toBeNull();
      expect(result.unavailable[score]).toContain(named);
    }
    expect(Object.keys(result.unavailable).sort()).toEqual([...scores].sort());
  });

  it('withholds BCLC when no lesions are recorded', () => {
    const result = computeLiverScores({ ...NORMAL, lesionDiametersMm: [] });
    expect(result.bclc).toBeNull();
    expect(result.unavailable.bclc).toContain('No nodules');
  });

  it('lists every missing input of a score in one reason', () => {
    const result = computeLiverScores({ ...NORMAL, creatinineMgDl: undefined, inr: undefined });
    expect(result.unavailable.meld).toBe('Not recorded: creatinine, INR.');
  });

  it('says why BCLC is withheld when Child-Pugh cannot be computed', () => {
    const result = computeLiverScores({ ...NORMAL, albuminGDl: null });
    expect(result.unavailable.bclc).toBe(
      'Child-Pugh class is not known. Child-Pugh: Not recorded: albumin.',
    );
  });

  it('reports a recorded but unusable value apart from a missing one', () => {
    const result = computeLiverScores({ ...NORMAL, creatinineMgDl: -1, inr: null });
    expect(result.meld).toBeNull();
    expect(result.unavailable.meld).toBe(
      'Not recorded: INR. Not usable: creatinine (-1 is not a finite number of at least 0).',
    );
  });

  it('refuses an ascites grade outside the table', () => {
    const input = { ...NORMAL, ascites: 'severe' } as unknown as LiverScoreInput;
    const result = computeLiverScores(input);
    expect(result.childPugh).toBeNull();
    expect(result.unavailable.childPugh).toContain('Not usable: ascites');
  });
});

describe('inputs that a score does not need do not withhold it', () => {
  it('scores MELD-Na as MELD without sodium when MELD is 11 or below (Kim 2008 formula)', () => {
    const result = computeLiverScores({ ...NORMAL, sodiumMmolL: undefined });
    expect(result.meldNa).toBe(6);
    expect(result.unavailable.meldNa).toBeUndefined();
  });

  it('still withholds MELD-Na when a recorded sodium is unusable, whatever the MELD', () => {
    const result = computeLiverScores({ ...NORMAL, sodiumMmolL: 0 });
    expect(result.meldNa).toBeNull();
    expect(result.unavailable.meldNa).toContain('Not usable: sodium');
  });

  // Creatinine cap at 4.0 mg/dL: UNOS/OPTN MELD policy.
  it('scores MELD without the dialysis answer when creatinine is at its 4.0 mg/dL cap', () => {
    const result = computeLiverScores({
      ...NORMAL,
      creatinineMgDl: 4.5,
      dialysisTwiceInPastWeek: null,
    });
    // Cr capped at 4.0, bili and INR raised to 1: 0.957 ln 4 + 0.643 = 1.970 → 20 [C].
    expect(result.meld).toBe(20);
  });

  it('suggests BCLC D for ECOG 3 without any laboratory values (ECOG 3–4 rule from memory)', () => {
    const result = computeLiverScores({
      lesionDiametersMm: [25],
      ecogPerformanceStatus: 3,
    });
    expect(result.bclc?.stage).toBe('D');
    expect(result.bclc?.caution).toBe(BCLC_CAUTION);
  });
});

describe('laboratory values on the edge of what each score accepts', () => {
  // ALBI takes the logarithm of bilirubin (Johnson 2015); MELD raises it to 1, Child-Pugh bands it.
  it('withholds ALBI but scores MELD and Child-Pugh for a bilirubin of 0', () => {
    const result = computeLiverScores({ ...NORMAL, bilirubinMgDl: 0 });
    expect(result.albi).toBeNull();
    expect(result.unavailable.albi).toContain('Not usable: bilirubin');
    expect(result.meld).toBe(6);
    expect(result.childPugh?.points).toBe(5);
  });

  // UNOS/OPTN MELD policy; 0.957 ln 4 + 0.643 = 1.970 → 20 [C].
  it('applies dialysis twice in the past week as creatinine 4.0 mg/dL: MELD 20', () => {
    const result = computeLiverScores({ ...NORMAL, dialysisTwiceInPastWeek: true });
    expect(result.meld).toBe(20);
  });
});
