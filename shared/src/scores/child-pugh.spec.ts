import { describe, expect, it } from 'vitest';
import { childPughClassForPoints, childPughScore, type ChildPughInput } from './child-pugh';
import { albuminToGDl, bilirubinToMgDl } from './units';

const PUGH = 'Pugh 1973 standard table (from memory for the attribution)';

/** Every criterion in its 1-point band: 5 points. */
const NORMAL: ChildPughInput = {
  bilirubinMgDl: 1.0,
  albuminGDl: 4.0,
  inr: 1.0,
  ascites: 'none',
  encephalopathy: 'none',
};

describe(`worked examples computed from the ${PUGH} [C]`, () => {
  it('scores all-normal values as 5 points, class A', () => {
    expect(childPughScore(NORMAL)).toEqual({ points: 5, class: 'A' });
  });

  it('scores bili 1.5, albumin 3.0, INR 1.5, mild ascites as 7 points, class B', () => {
    const input: ChildPughInput = {
      ...NORMAL,
      bilirubinMgDl: 1.5,
      albuminGDl: 3.0,
      inr: 1.5,
      ascites: 'mild',
    };
    expect(childPughScore(input)).toEqual({ points: 7, class: 'B' });
  });

  it('scores bili 3.5, albumin 2.5, INR 2.0, moderate-severe ascites, grade 1-2 as 13, C', () => {
    const input: ChildPughInput = {
      bilirubinMgDl: 3.5,
      albuminGDl: 2.5,
      inr: 2.0,
      ascites: 'moderate-severe',
      encephalopathy: 'grade-1-2',
    };
    expect(childPughScore(input)).toEqual({ points: 13, class: 'C' });
  });

  it('scores every criterion at its worst as 15 points, class C', () => {
    const input: ChildPughInput = {
      bilirubinMgDl: 6,
      albuminGDl: 2,
      inr: 3,
      ascites: 'moderate-severe',
      encephalopathy: 'grade-3-4',
    };
    expect(childPughScore(input)).toEqual({ points: 15, class: 'C' });
  });
});

// With the four other criteria normal (4 points), the total is 4 + the criterion's points.
describe(`band edges as the table reads them, ${PUGH}`, () => {
  it.each([
    { bilirubinMgDl: 1.99, criterionPoints: 1 },
    { bilirubinMgDl: 2.0, criterionPoints: 2 },
    { bilirubinMgDl: 3.0, criterionPoints: 2 },
    { bilirubinMgDl: 3.01, criterionPoints: 3 },
  ])('gives bilirubin $bilirubinMgDl mg/dL $criterionPoints points', (row) => {
    const result = childPughScore({ ...NORMAL, bilirubinMgDl: row.bilirubinMgDl });
    expect(result.points).toBe(4 + row.criterionPoints);
  });

  it.each([
    { albuminGDl: 3.51, criterionPoints: 1 },
    { albuminGDl: 3.5, criterionPoints: 2 },
    { albuminGDl: 2.8, criterionPoints: 2 },
    { albuminGDl: 2.79, criterionPoints: 3 },
  ])('gives albumin $albuminGDl g/dL $criterionPoints points', (row) => {
    const result = childPughScore({ ...NORMAL, albuminGDl: row.albuminGDl });
    expect(result.points).toBe(4 + row.criterionPoints);
  });

  it.each([
    { inr: 1.69, criterionPoints: 1 },
    { inr: 1.7, criterionPoints: 2 },
    { inr: 2.3, criterionPoints: 2 },
    { inr: 2.31, criterionPoints: 3 },
  ])('gives INR $inr $criterionPoints points', (row) => {
    expect(childPughScore({ ...NORMAL, inr: row.inr }).points).toBe(4 + row.criterionPoints);
  });

  it.each([
    { ascites: 'none', criterionPoints: 1 },
    { ascites: 'mild', criterionPoints: 2 },
    { ascites: 'moderate-severe', criterionPoints: 3 },
  ] as const)('gives ascites $ascites $criterionPoints points', (row) => {
    expect(childPughScore({ ...NORMAL, ascites: row.ascites }).points).toBe(
      4 + row.criterionPoints,
    );
  });

  it.each([
    { encephalopathy: 'none', criterionPoints: 1 },
    { encephalopathy: 'grade-1-2', criterionPoints: 2 },
    { encephalopathy: 'grade-3-4', criterionPoints: 3 },
  ] as const)('gives encephalopathy $encephalopathy $criterionPoints points', (row) => {
    expect(childPughScore({ ...NORMAL, encephalopathy: row.encephalopathy }).points).toBe(
      4 + row.criterionPoints,
    );
  });
});

describe(`class edges, ${PUGH}: A 5–6, B 7–9, C 10–15`, () => {
  it.each([
    { points: 5, expected: 'A' },
    { points: 6, expected: 'A' },
    { points: 7, expected: 'B' },
    { points: 9, expected: 'B' },
    { points: 10, expected: 'C' },
    { points: 15, expected: 'C' },
  ])('puts $points points in class $expected', ({ points, expected }) => {
    expect(childPughClassForPoints(points)).toBe(expected);
  });

  it.each([{ points: 4 }, { points: 16 }, { points: 6.5 }])(
    'refuses a total of $points points, which the table cannot produce',
    ({ points }) => {
      expect(() => childPughClassForPoints(points)).toThrow(RangeError);
    },
  );
});

describe('values converted from SI units score like the same values in mg/dL and g/dL', () => {
  it('scores bilirubin 51.3 µmol/L (3.0 mg/dL, ×17.1 common practice) as 2 points, not 3', () => {
    const bilirubinMgDl = bilirubinToMgDl({ value: 51.3, unit: 'umol/L' });
    expect(childPughScore({ ...NORMAL, bilirubinMgDl }).points).toBe(6);
  });

  it('scores albumin 28 g/L (2.8 g/dL) as 2 points, not 3', () => {
    const albuminGDl = albuminToGDl({ value: 28, unit: 'g/L' });
    expect(childPughScore({ ...NORMAL, albuminGDl }).points).toBe(6);
  });
});

describe('refused inputs', () => {
  it.each([
    { name: 'a negative bilirubin', input: { ...NORMAL, bilirubinMgDl: -1 } },
    { name: 'an albumin that is not a number', input: { ...NORMAL, albuminGDl: Number.NaN } },
    { name: 'an infinite INR', input: { ...NORMAL, inr: Number.POSITIVE_INFINITY } },
    {
      name: 'an unknown ascites grade',
      input: { ...NORMAL, ascites: 'severe' } as unknown as ChildPughInput,
    },
  ])('throws for $name', ({ input }) => {
    expect(() => childPughScore(input)).toThrow(RangeError);
  });
});
