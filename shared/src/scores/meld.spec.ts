import { describe, expect, it } from 'vitest';
import { meldInitialScore, meldNaScore, meldScore, type MeldInput } from './meld';

const KIM_2008 = 'Kim WR et al., N Engl J Med 2008;359:1018';
const UNOS = 'UNOS/OPTN MELD policy';

function labs(creatinineMgDl: number, bilirubinMgDl: number, inr: number): MeldInput {
  return { creatinineMgDl, bilirubinMgDl, inr, dialysisTwiceInPastWeek: false };
}

describe(`worked examples computed from the formulas of ${UNOS} and ${KIM_2008} [C]`, () => {
  it.each([
    { creatinine: 2.7, bilirubin: 1.5, inr: 1.1, sodium: 135, meld: 19, meldNa: 20 },
    { creatinine: 1.0, bilirubin: 1.5, inr: 1.5, sodium: 135, meld: 13, meldNa: 15 },
    { creatinine: 1.4, bilirubin: 3.2, inr: 1.8, sodium: 134, meld: 21, meldNa: 23 },
    { creatinine: 0.5, bilirubin: 0.4, inr: 0.9, sodium: 140, meld: 6, meldNa: 6 },
  ])(
    'scores Cr $creatinine, bili $bilirubin, INR $inr, Na $sodium as MELD $meld, MELD-Na $meldNa',
    ({ creatinine, bilirubin, inr, sodium, meld, meldNa }) => {
      const input = labs(creatinine, bilirubin, inr);
      expect(meldScore(input)).toBe(meld);
      expect(meldNaScore({ ...input, sodiumMmolL: sodium })).toBe(meldNa);
    },
  );
});

describe(`MELD(i) before rounding, computed by hand from the ${UNOS} formula [C]`, () => {
  it.each([
    { creatinine: 2.7, bilirubin: 1.5, inr: 1.1, expected: 1.8536 },
    { creatinine: 1.0, bilirubin: 1.5, inr: 1.5, expected: 1.2504 },
    { creatinine: 1.4, bilirubin: 3.2, inr: 1.8, expected: 2.063 },
    { creatinine: 1.0, bilirubin: 1.0, inr: 1.0, expected: 0.643 },
  ])(
    'gives $expected for Cr $creatinine, bili $bilirubin, INR $inr',
    ({ creatinine, bilirubin, inr, expected }) => {
      expect(meldInitialScore(labs(creatinine, bilirubin, inr))).toBeCloseTo(expected, 4);
    },
  );
});

describe(`bounds of the laboratory values, ${UNOS}`, () => {
  it.each([
    { name: 'creatinine', input: labs(0.4, 2.0, 1.5), sameAs: labs(1.0, 2.0, 1.5) },
    { name: 'bilirubin', input: labs(2.0, 0.3, 1.5), sameAs: labs(2.0, 1.0, 1.5) },
    { name: 'INR', input: labs(2.0, 2.0, 0.8), sameAs: labs(2.0, 2.0, 1.0) },
  ])('raises $name below 1 to 1', ({ input, sameAs }) => {
    expect(meldInitialScore(input)).toBe(meldInitialScore(sameAs));
  });

  it('scores every value below 1 as the minimum MELD of 6', () => {
    expect(meldScore(labs(0, 0, 0))).toBe(6);
  });

  it('caps creatinine at 4.0 mg/dL: Cr 6.5 scores as Cr 4.0, MELD 20 [C]', () => {
    expect(meldScore(labs(6.5, 1, 1))).toBe(20);
    expect(meldInitialScore(labs(6.5, 1, 1))).toBe(meldInitialScore(labs(4, 1, 1)));
  });

  it('sets creatinine to 4.0 mg/dL after dialysis twice in the past week, MELD 20 [C]', () => {
    expect(meldScore({ ...labs(1, 1, 1), dialysisTwiceInPastWeek: true })).toBe(20);
  });

  it('caps MELD at 40 (uncapped 49 for Cr 4, bili 40, INR 4) [C]', () => {
    expect(meldInitialScore(labs(4, 40, 4))).toBeCloseTo(4.9167, 4);
    expect(meldScore(labs(4, 40, 4))).toBe(40);
  });

  it.each([
    { name: 'a negative creatinine', input: labs(-1, 1, 1) },
    { name: 'a bilirubin that is not a number', input: labs(1, Number.NaN, 1) },
    { name: 'an infinite INR', input: labs(1, 1, Number.POSITIVE_INFINITY) },
  ])('refuses $name', ({ input }) => {
    expect(() => meldScore(input)).toThrow(RangeError);
  });
});

describe(`MELD-Na rules, ${KIM_2008} as applied by ${UNOS}`, () => {
  it('adds the sodium term to the integer MELD, not the unrounded MELD(i): 15, not 14 [C]', () => {
    // Unrounded MELD(i) × 10 = 12.504 would give 14.3 → 14; the integer 13 gives 14.78 → 15.
    expect(meldNaScore({ ...labs(1.0, 1.5, 1.5), sodiumMmolL: 135 })).toBe(15);
  });

  it('does not apply the sodium term at MELD 11 (Cr 1, bili 1, INR 1.5, Na 125) [C]', () => {
    const input = labs(1, 1, 1.5);
    expect(meldScore(input)).toBe(11);
    expect(meldNaScore({ ...input, sodiumMmolL: 125 })).toBe(11);
  });

  it('applies the sodium term at MELD 12: 12 + 15.84 − 4.752 = 23.09 → 23 [C]', () => {
    const input = labs(1, 1, 1.6);
    expect(meldScore(input)).toBe(12);
    expect(meldNaScore({ ...input, sodiumMmolL: 125 })).toBe(23);
  });

  it('clamps sodium below 125 mmol/L to 125', () => {
    const input = labs(2, 2, 2);
    expect(meldNaScore({ ...input, sodiumMmolL: 118 })).toBe(
      meldNaScore({ ...input, sodiumMmolL: 125 }),
    );
  });

  it('clamps sodium above 137 mmol/L to 137, where MELD-Na equals MELD (23) [C]', () => {
    const input = labs(2, 2, 2);
    expect(meldScore(input)).toBe(23);
    expect(meldNaScore({ ...input, sodiumMmolL: 145 })).toBe(23);
  });

  it('scores Cr 2, bili 2, INR 2, Na 130 as 23 + 9.24 − 5.313 = 26.93 → 27 [C]', () => {
    expect(meldNaScore({ ...labs(2, 2, 2), sodiumMmolL: 130 })).toBe(27);
  });

  it('caps MELD-Na at 40', () => {
    expect(meldNaScore({ ...labs(4, 40, 4), sodiumMmolL: 125 })).toBe(40);
  });

  it('never falls below MELD nor rises above 40, as the formula implies up to MELD 40 [C]', () => {
    for (const creatinine of [1, 1.8, 2.9, 4]) {
      for (const bilirubin of [1, 3, 9, 27]) {
        for (const inr of [1, 1.4, 2.2, 3.5]) {
          for (const sodium of [120, 125, 130, 134, 137]) {
            const input = labs(creatinine, bilirubin, inr);
            const meldNa = meldNaScore({ ...input, sodiumMmolL: sodium });
            expect(meldNa).toBeGreaterThanOrEqual(meldScore(input));
            expect(meldNa).toBeLessThanOrEqual(40);
          }
        }
      }
    }
  });

  it.each([{ sodium: 0 }, { sodium: -135 }, { sodium: Number.NaN }])(
    'refuses a sodium of $sodium',
    ({ sodium }) => {
      expect(() => meldNaScore({ ...labs(2, 2, 2), sodiumMmolL: sodium })).toThrow(RangeError);
    },
  );
});
