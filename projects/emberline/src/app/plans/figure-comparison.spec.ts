import { bestIndexes, figureDirections, shownValue } from './figure-comparison';

// The directions are the ("Plan comparison"): greater is better for clearance, coverage
// and margin; smaller for path length, angulation, collateral, surface below target, crossings.
describe('figureDirections', () => {
  it('ranks clearance, coverage and margin by the greater value', () => {
    expect(figureDirections.clearanceMm).toBe('greater');
    expect(figureDirections.coveredPercent).toBe('greater');
    expect(figureDirections.minimalMarginMm).toBe('greater');
  });

  it('ranks path length, angulation, crossings, collateral and surface below target by the smaller value', () => {
    expect(figureDirections.pathLengthMm).toBe('smaller');
    expect(figureDirections.angulationDeg).toBe('smaller');
    expect(figureDirections.capsuleCrossings).toBe('smaller');
    expect(figureDirections.collateralMl).toBe('smaller');
    expect(figureDirections.surfaceBelowTargetPercent).toBe('smaller');
  });
});

describe('shownValue', () => {
  it('rounds as the table prints the value (toFixed)', () => {
    expect(shownValue(4.96, 1)).toBe(5);
    expect(shownValue(4.94, 1)).toBe(4.9);
    // toFixed rounds halves away from zero (ECMA-262 Number.prototype.toFixed); Math.round would
    // give −2 here, and the mark would disagree with the printed "−3".
    expect(shownValue(-2.5, 0)).toBe(-3);
  });

  it('treats NaN, infinities, null and undefined as missing', () => {
    expect(shownValue(Number.NaN, 1)).toBeNull();
    expect(shownValue(Number.POSITIVE_INFINITY, 1)).toBeNull();
    expect(shownValue(null, 1)).toBeNull();
    expect(shownValue(undefined, 1)).toBeNull();
  });

  it('reads a tiny negative value that shows as zero as zero', () => {
    expect(Object.is(shownValue(-0.04, 1), 0)).toBe(true);
  });
});

describe('bestIndexes', () => {
  it('marks the largest clearance', () => {
    expect(bestIndexes([12.4, 3.1, 8], 'greater', 1)).toEqual([0]);
  });

  it('marks the shortest path', () => {
    expect(bestIndexes([112.5, 96.2, 130], 'smaller', 1)).toEqual([1]);
  });

  it('marks every plan tied for the best value', () => {
    expect(bestIndexes([100, 87.5, 100], 'greater', 1)).toEqual([0, 2]);
  });

  it('marks nothing when every plan shows the same value', () => {
    expect(bestIndexes([2, 2, 2], 'smaller', 0)).toEqual([]);
  });

  it('compares at the shown precision: 5.04 and 5.01 mm both read 5.0 mm and tie', () => {
    expect(bestIndexes([5.04, 5.01], 'greater', 1)).toEqual([]);
    expect(bestIndexes([5.04, 5.01, 3], 'greater', 1)).toEqual([0, 1]);
  });

  it('never lets a missing value win, and compares the values that are present', () => {
    expect(bestIndexes([null, 4.2, undefined, 6.8], 'greater', 1)).toEqual([3]);
    expect(bestIndexes([null, 4.2, Number.NaN, 6.8], 'smaller', 1)).toEqual([1]);
  });

  it('marks nothing when only one plan has the figure', () => {
    expect(bestIndexes([null, 4.2, undefined], 'greater', 1)).toEqual([]);
  });

  it('ranks negative margins (tumour outside the zone): −1.5 mm beats −4.0 mm', () => {
    // TumourCoverage (shared/src/api/assessments.ts): the minimal margin is negative when part of
    // the tumour lies outside the zone; a margin nearer zero leaves less tumour uncovered.
    expect(bestIndexes([-4, -1.5], 'greater', 1)).toEqual([1]);
    expect(bestIndexes([-4, 2.5, -1.5], 'greater', 1)).toEqual([1]);
  });

  it('treats −0.0 and 0.0 as the same shown margin', () => {
    expect(bestIndexes([-0.02, 0.01], 'greater', 1)).toEqual([]);
  });

  it('ranks counts at whole numbers', () => {
    expect(bestIndexes([1, 2, 1], 'smaller', 0)).toEqual([0, 2]);
  });
});
