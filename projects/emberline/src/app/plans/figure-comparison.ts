/**
 * Which plan holds the better value of one figure in the plan comparison. Pure: the table asks
 * these functions and only draws the answer.
 *
 * Values are compared at the precision the table shows them (two values that read "5.0 mm" are
 * a tie, whatever the digits behind), a missing value never wins, and a row marks nothing when
 * fewer than two plans have the figure or when every plan shows the same value: then no plan is
 * better. Ties for the best value are all marked.
 */

/** Whether a larger or a smaller value of a figure is the better one. */
export type BetterDirection = 'greater' | 'smaller';

/** The direction of each ranked figure of the comparison: which way is better. */
export const figureDirections = {
  clearanceMm: 'greater',
  coveredPercent: 'greater',
  minimalMarginMm: 'greater',
  pathLengthMm: 'smaller',
  angulationDeg: 'smaller',
  capsuleCrossings: 'smaller',
  collateralMl: 'smaller',
  surfaceBelowTargetPercent: 'smaller',
} as const satisfies Record<string, BetterDirection>;

/** A value as the table shows it: rounded to `decimals`; anything not finite counts as missing. */
export function shownValue(value: number | null | undefined, decimals: number): number | null {
  if (value === null || value === undefined || !Number.isFinite(value)) return null;
  // Rounded exactly as `toFixed` rounds for the table, so the mark never disagrees with the text.
  const rounded = Number(value.toFixed(decimals));
  // -0.04 rounds to -0: the same figure as 0 on screen, and the same for the comparison.
  return rounded === 0 ? 0 : rounded;
}

/**
 * Indexes of the best values among `values` (one a plan, in column order), compared after
 * rounding to `decimals`. Empty when fewer than two values are present or all present values
 * are equal.
 */
export function bestIndexes(
  values: readonly (number | null | undefined)[],
  direction: BetterDirection,
  decimals: number,
): number[] {
  const shown = values.map((value) => shownValue(value, decimals));
  const present = shown.filter((value): value is number => value !== null);
  if (present.length < 2) return [];
  const best = direction === 'greater' ? Math.max(...present) : Math.min(...present);
  const worst = direction === 'greater' ? Math.min(...present) : Math.max(...present);
  if (best === worst) return [];
  return shown.flatMap((value, index) => (value === best ? [index] : []));
}
