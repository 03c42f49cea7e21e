import { describe, expect, it } from 'vitest';
import type { ZoneTableRow } from '../api/applicator-profiles';
import { EngineRefusal } from './engine-refusal';
import { interpolateZoneTable, ZoneTableRangeError } from './zone-table';

// An invented zone table (not any maker's): two powers × two times, a complete grid.
const completeTable: ZoneTableRow[] = [
  { powerW: 60, timeS: 300, zoneLengthMm: 30, zoneWidthMm: 20, tipOffsetMm: 5 },
  { powerW: 60, timeS: 600, zoneLengthMm: 40, zoneWidthMm: 30, tipOffsetMm: 8 },
  { powerW: 100, timeS: 300, zoneLengthMm: 36, zoneWidthMm: 24, tipOffsetMm: 6 },
  { powerW: 100, timeS: 600, zoneLengthMm: 50, zoneWidthMm: 36, tipOffsetMm: 10 },
];

// Incomplete: 100 W is listed at 300 and 900 s, 60 W at 300 and 600 s.
const incompleteTable: ZoneTableRow[] = [
  completeTable[0],
  completeTable[1],
  completeTable[2],
  { powerW: 100, timeS: 900, zoneLengthMm: 60, zoneWidthMm: 42, tipOffsetMm: 12 },
];

function refusalOf(run: () => unknown): ZoneTableRangeError {
  try {
    run();
  } catch (error) {
    if (error instanceof ZoneTableRangeError) return error;
    throw error;
  }
  throw new Error('expected a refusal');
}

describe('interpolateZoneTable', () => {
  it.each(completeTable)('returns the row itself at $powerW W for $timeS s', (row) => {
    expect(interpolateZoneTable(completeTable, row.powerW, row.timeS)).toEqual({
      zoneLengthMm: row.zoneLengthMm,
      zoneWidthMm: row.zoneWidthMm,
      tipOffsetMm: row.tipOffsetMm,
    });
  });

  it('interpolates linearly in time along a listed power', () => {
    // Hand-computed: halfway from 300 to 600 s at 60 W → the mean of the two rows.
    const zone = interpolateZoneTable(completeTable, 60, 450);
    expect(zone.zoneLengthMm).toBeCloseTo(35, 12);
    expect(zone.zoneWidthMm).toBeCloseTo(25, 12);
    expect(zone.tipOffsetMm).toBeCloseTo(6.5, 12);
  });

  it('interpolates bilinearly at the centre of a complete grid cell', () => {
    // Bilinear interpolation (any numerical-analysis text, common practice): at the centre of
    // the cell the value is the mean of the four corners — (30 + 40 + 36 + 50) / 4 = 39 mm,
    // (20 + 30 + 24 + 36) / 4 = 27.5 mm, (5 + 8 + 6 + 10) / 4 = 7.25 mm, by hand.
    const zone = interpolateZoneTable(completeTable, 80, 450);
    expect(zone.zoneLengthMm).toBeCloseTo(39, 12);
    expect(zone.zoneWidthMm).toBeCloseTo(27.5, 12);
    expect(zone.tipOffsetMm).toBeCloseTo(7.25, 12);
  });

  it('weights the corners bilinearly off the centre', () => {
    // At 70 W, 375 s both fractions are 1/4: weights 9/16, 3/16, 3/16, 1/16 on the corners
    // (60, 300), (60, 600), (100, 300), (100, 600): 16.875 + 7.5 + 6.75 + 3.125 = 34.25 mm.
    expect(interpolateZoneTable(completeTable, 70, 375).zoneLengthMm).toBeCloseTo(34.25, 12);
  });

  it('on an incomplete grid interpolates in time on each power row, then in power', () => {
    // 60 W lists 600 s: 40 mm. 100 W: halfway from 300 s (36) to 900 s (60) → 48 mm.
    // Halfway in power: (40 + 48) / 2 = 44 mm (hand-computed).
    expect(interpolateZoneTable(incompleteTable, 80, 600).zoneLengthMm).toBeCloseTo(44, 12);
  });

  it('refuses a power below the table, naming its range', () => {
    const refusal = refusalOf(() => interpolateZoneTable(completeTable, 40, 300));
    expect(refusal).toBeInstanceOf(EngineRefusal);
    expect(refusal.name).toBe('EngineRefusal');
    expect(refusal.field).toBe('powerW');
    expect(refusal.range).toEqual({ lowest: 60, highest: 100 });
    expect(refusal.message).toContain('60–100 W');
  });

  it('refuses a power above the table', () => {
    const refusal = refusalOf(() => interpolateZoneTable(completeTable, 120, 300));
    expect(refusal.field).toBe('powerW');
    expect(refusal.message).toContain('120 W');
  });

  it('refuses a time beyond the times listed at the requested power', () => {
    const refusal = refusalOf(() => interpolateZoneTable(completeTable, 100, 700));
    expect(refusal.field).toBe('timeS');
    expect(refusal.range).toEqual({ lowest: 300, highest: 600 });
    expect(refusal.message).toContain('300–600 s');
  });

  it('refuses a time that one of the two bracketing power rows does not cover', () => {
    // 800 s is listed at 100 W (up to 900 s) but not at 60 W (up to 600 s): no extrapolation.
    const refusal = refusalOf(() => interpolateZoneTable(incompleteTable, 80, 800));
    expect(refusal.field).toBe('timeS');
    expect(refusal.message).toContain('at 60 W, one of the two table powers either side of 80 W');
  });

  it('names the applicator in the field path and the message when asked', () => {
    const refusal = refusalOf(() =>
      interpolateZoneTable(completeTable, 10, 300, {
        fieldPath: 'applicators[1]',
        messagePrefix: 'Applicator 2: ',
      }),
    );
    expect(refusal.field).toBe('applicators[1].powerW');
    expect(refusal.message.startsWith('Applicator 2: 10 W')).toBe(true);
  });

  it('reads a one-row table only at its own power and time', () => {
    const [row] = completeTable;
    expect(interpolateZoneTable([row], 60, 300).zoneLengthMm).toBe(30);
    expect(refusalOf(() => interpolateZoneTable([row], 60, 301)).message).toContain('only 300 s');
  });

  it('refuses an empty table and a pair listed twice', () => {
    expect(refusalOf(() => interpolateZoneTable([], 60, 300)).field).toBe('profile.zoneTable');
    const twice = [...completeTable, { ...completeTable[0], zoneLengthMm: 99 }];
    expect(refusalOf(() => interpolateZoneTable(twice, 60, 300)).message).toContain('twice');
  });
});
