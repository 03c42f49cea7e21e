/**
 * Child-Pugh score and class (Pugh RNH et al., Br J Surg 1973;60:646, attribution from
 * memory), as the standard table reads today with INR in place of the original prothrombin
 * time prolongation (common practice):
 *
 * | points | bilirubin mg/dL | albumin g/dL | INR        | ascites         | encephalopathy |
 * | 1      | < 2             | > 3.5        | < 1.7      | none            | none           |
 * | 2      | 2 to 3          | 2.8 to 3.5   | 1.7 to 2.3 | mild            | grade 1–2      |
 * | 3      | > 3             | < 2.8        | > 2.3      | moderate–severe | grade 3–4      |
 *
 * Both ends of each middle band belong to the middle band (bilirubin 2 and 3 score 2, albumin
 * 2.8 and 3.5 score 2, INR 1.7 and 2.3 score 2). Class A is 5–6 points, B 7–9, C 10–15.
 */

/** Ascites as the board grades it clinically or on imaging. */
export type Ascites = 'none' | 'mild' | 'moderate-severe';
/** Hepatic encephalopathy by West Haven grade, grouped as the Child-Pugh table groups it. */
export type Encephalopathy = 'none' | 'grade-1-2' | 'grade-3-4';
/** Child-Pugh class. */
export type ChildPughClass = 'A' | 'B' | 'C';

/** Values for Child-Pugh. */
export interface ChildPughInput {
  /** Serum total bilirubin, mg/dL. */
  bilirubinMgDl: number;
  /** Serum albumin, g/dL. */
  albuminGDl: number;
  /** International normalised ratio, no unit. */
  inr: number;
  ascites: Ascites;
  encephalopathy: Encephalopathy;
}

/** Child-Pugh points (5–15) and the class they fall in. */
export interface ChildPughResult {
  points: number;
  class: ChildPughClass;
}

/** Allowed ascites values, for callers that check data from outside the type system. */
export const ASCITES_VALUES: readonly Ascites[] = ['none', 'mild', 'moderate-severe'];
/** Allowed encephalopathy values, for callers that check data from outside the type system. */
export const ENCEPHALOPATHY_VALUES: readonly Encephalopathy[] = ['none', 'grade-1-2', 'grade-3-4'];

type Points = 1 | 2 | 3;

function requireNonNegative(name: string, value: number): void {
  if (!Number.isFinite(value) || value < 0) {
    throw new RangeError(`${name} must be a finite number of at least 0, got ${value}`);
  }
}

function bilirubinPoints(bilirubinMgDl: number): Points {
  if (bilirubinMgDl < 2) return 1;
  return bilirubinMgDl <= 3 ? 2 : 3;
}

function albuminPoints(albuminGDl: number): Points {
  if (albuminGDl > 3.5) return 1;
  return albuminGDl >= 2.8 ? 2 : 3;
}

function inrPoints(inr: number): Points {
  if (inr < 1.7) return 1;
  return inr <= 2.3 ? 2 : 3;
}

function gradedPoints<T extends string>(name: string, grades: readonly T[], value: T): Points {
  const index = grades.indexOf(value);
  if (index < 0) {
    throw new RangeError(`${name} must be one of ${grades.join(', ')}, got ${String(value)}`);
  }
  return (index + 1) as Points;
}

/** Child-Pugh class for a total of 5–15 points: A 5–6, B 7–9, C 10–15. */
export function childPughClassForPoints(points: number): ChildPughClass {
  if (!Number.isInteger(points) || points < 5 || points > 15) {
    throw new RangeError(`Child-Pugh points must be an integer from 5 to 15, got ${points}`);
  }
  if (points <= 6) return 'A';
  return points <= 9 ? 'B' : 'C';
}

/**
 * Child-Pugh points and class. Bilirubin in mg/dL, albumin in g/dL, INR without unit.
 * Throws a RangeError for a negative or non-finite number or an unknown grade.
 */
export function childPughScore(input: ChildPughInput): ChildPughResult {
  requireNonNegative('bilirubinMgDl', input.bilirubinMgDl);
  requireNonNegative('albuminGDl', input.albuminGDl);
  requireNonNegative('inr', input.inr);
  const points =
    bilirubinPoints(input.bilirubinMgDl) +
    albuminPoints(input.albuminGDl) +
    inrPoints(input.inr) +
    gradedPoints('ascites', ASCITES_VALUES, input.ascites) +
    gradedPoints('encephalopathy', ENCEPHALOPATHY_VALUES, input.encephalopathy);
  return { points, class: childPughClassForPoints(points) };
}
