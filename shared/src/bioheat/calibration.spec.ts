import { describe, expect, it } from 'vitest';
import type { ZoneTableRow } from '../api/applicator-profiles';
import { calibrateApplicatorProfile } from './calibration';
import { homogeneousZoneSizes } from './homogeneous-zone';
import { BioheatAbortedError } from './pennes-solver';

const ACTIVE_LENGTH_MM = 20;
const HEATINGS = [
  { powerW: 30, timeS: 300 },
  { powerW: 60, timeS: 300 },
  { powerW: 60, timeS: 600 },
];

/** A zone table written by the model itself at a known coupling efficiency. */
function modelTable(parameter: number): ZoneTableRow[] {
  return homogeneousZoneSizes(ACTIVE_LENGTH_MM, HEATINGS, parameter).map((size, index) => ({
    ...HEATINGS[index],
    zoneLengthMm: size.lengthMm,
    zoneWidthMm: size.widthMm,
    tipOffsetMm: size.tipOffsetMm ?? 0,
  }));
}

describe('calibration of the zone model to a zone table', () => {
  it('recovers the coupling efficiency that wrote the table', () => {
    const table = modelTable(0.35);
    const calibration = calibrateApplicatorProfile({
      activeLengthMm: ACTIVE_LENGTH_MM,
      zoneTable: table,
    });
    // The search stops once a step moves η by under 0.2 %.
    expect(Math.abs(calibration.parameter / 0.35 - 1)).toBeLessThan(0.005);
    expect(calibration.rmsResidualMm).toBeLessThan(0.05);
    expect(calibration.isAtRangeLimit).toBe(false);
    expect(calibration.rows).toHaveLength(3);
  });

  it('reports every row’s model size and residual, model minus table', () => {
    const table = modelTable(0.35);
    table[1] = { ...table[1], zoneWidthMm: table[1].zoneWidthMm + 4 };
    const calibration = calibrateApplicatorProfile({
      activeLengthMm: ACTIVE_LENGTH_MM,
      zoneTable: table,
    });
    calibration.rows.forEach((row, index) => {
      expect(row.powerW).toBe(table[index].powerW);
      expect(row.tableWidthMm).toBe(table[index].zoneWidthMm);
      expect(row.residualLengthMm).toBeCloseTo(row.modelLengthMm - row.tableLengthMm, 12);
      expect(row.residualWidthMm).toBeCloseTo(row.modelWidthMm - row.tableWidthMm, 12);
    });
    // The row made 4 mm wider than the model can give stands out, short of the table.
    const worst = calibration.rows[1].residualWidthMm;
    expect(worst).toBeLessThan(-2);
    for (const [index, row] of calibration.rows.entries()) {
      if (index !== 1) expect(Math.abs(row.residualWidthMm)).toBeLessThan(Math.abs(worst));
    }
    const squares = calibration.rows.flatMap((row) => [
      row.residualLengthMm ** 2,
      row.residualWidthMm ** 2,
    ]);
    expect(calibration.rmsResidualMm).toBeCloseTo(
      Math.sqrt(squares.reduce((sum, square) => sum + square, 0) / squares.length),
      12,
    );
  });

  it('flags a table out of the model’s reach instead of pretending to fit it', () => {
    const calibration = calibrateApplicatorProfile({
      activeLengthMm: ACTIVE_LENGTH_MM,
      zoneTable: [{ powerW: 60, timeS: 300, zoneLengthMm: 8, zoneWidthMm: 4, tipOffsetMm: 5 }],
    });
    expect(calibration.isAtRangeLimit).toBe(true);
    expect(calibration.parameter).toBeCloseTo(0.01, 6);
    expect(calibration.rmsResidualMm).toBeGreaterThan(5);
  });

  it('reports progress ending at 1 and stops when cancelled', () => {
    const fractions: number[] = [];
    const profile = { activeLengthMm: ACTIVE_LENGTH_MM, zoneTable: modelTable(0.35).slice(0, 1) };
    calibrateApplicatorProfile(profile, { onProgress: (fraction) => fractions.push(fraction) });
    expect(fractions.at(-1)).toBe(1);
    expect(() => calibrateApplicatorProfile(profile, { shouldAbort: () => true })).toThrow(
      BioheatAbortedError,
    );
  });

  it.each([
    [{ activeLengthMm: 0, zoneTable: [] }, /activeLengthMm must be a positive number/],
    [{ activeLengthMm: 20, zoneTable: [] }, /zoneTable must hold at least one row/],
    [
      {
        activeLengthMm: 20,
        zoneTable: [{ powerW: 60, timeS: 0, zoneLengthMm: 30, zoneWidthMm: 20, tipOffsetMm: 5 }],
      },
      /zoneTable\[0\]\.timeS must be a positive number/,
    ],
  ])('refuses a malformed profile, naming the field (%#)', (profile, message) => {
    expect(() => calibrateApplicatorProfile(profile)).toThrow(message);
  });
});
