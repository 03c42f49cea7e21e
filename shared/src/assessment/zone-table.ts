/**
 * Reading an applicator profile's zone table between its rows (applicator-profiles.ts): the
 * ablation zone its maker promises at a power and time that the table may not list.
 *
 * Rule. The rows are grouped by power. The requested power P is bracketed by the two nearest
 * table powers P₀ ≤ P ≤ P₁ (P alone when the table lists it). On each of those power rows the
 * zone is interpolated linearly in time between the two table times that bracket the requested
 * time t (the row's own value when it lists t); the two results are then interpolated linearly
 * in power. On a complete grid (every power listed at every time) this is exactly bilinear
 * interpolation; on an incomplete grid it still uses only values the table holds, row by row.
 * Nothing is extrapolated: a power outside the table's powers, or a time outside the times of a
 * bracketing power row, is refused with a `ZoneTableRangeError` that names the range.
 *
 * Interpolated: zone length and width (millimetres) and the offset of the zone's centre behind
 * the tip (millimetres), each linearly.
 */
import type { ZoneTableRow } from '../api/applicator-profiles';
import { EngineRefusal } from './engine-refusal';

/** The zone the table gives at one power and time: an ellipsoid about the shaft. */
export interface ZoneDimensions {
  /** Length of the zone along the shaft, mm. */
  zoneLengthMm: number;
  /** Width of the zone across the shaft, mm. */
  zoneWidthMm: number;
  /** How far the zone's centre lies behind the tip, towards the entry, mm. */
  tipOffsetMm: number;
}

/** A power or time outside what the zone table covers (or a table that cannot be read). */
export class ZoneTableRangeError extends EngineRefusal {
  constructor(
    field: string,
    message: string,
    /** The requested value (W or s) and the range the table covers there, when one applies. */
    readonly requested: number,
    readonly range: { lowest: number; highest: number } | null,
  ) {
    super('zone-table-range', field, message);
  }
}

/** Options of `interpolateZoneTable`. */
export interface ZoneTableReadOptions {
  /**
   * Path of the zone table's applicator in the caller's input, prefixed to the refused field
   * (`applicators[1]` → `applicators[1].powerW`); nothing by default.
   */
  fieldPath?: string;
  /** Prefixed to the message, e.g. `Applicator 2: `. */
  messagePrefix?: string;
}

interface PowerRow {
  powerW: number;
  /** Rows at this power, by ascending time. */
  rows: ZoneTableRow[];
}

/**
 * The zone at `powerW` (watts) for `timeS` (seconds) by the rule at the top of this file.
 * Throws a `ZoneTableRangeError` for an empty table, a (power, time) pair listed twice, a
 * non-finite request, or a request outside the table.
 */
export function interpolateZoneTable(
  table: readonly ZoneTableRow[],
  powerW: number,
  timeS: number,
  options: ZoneTableReadOptions = {},
): ZoneDimensions {
  const prefix = options.messagePrefix ?? '';
  const field = (name: string) => (options.fieldPath ? `${options.fieldPath}.${name}` : name);
  const powerRows = groupByPower(table, field('profile.zoneTable'), prefix);
  if (!Number.isFinite(powerW) || !Number.isFinite(timeS)) {
    throw new ZoneTableRangeError(
      field(Number.isFinite(powerW) ? 'timeS' : 'powerW'),
      `${prefix}power and time must be finite numbers (got ${powerW} W, ${timeS} s).`,
      Number.isFinite(powerW) ? timeS : powerW,
      null,
    );
  }
  const lowest = powerRows[0].powerW;
  const highest = powerRows[powerRows.length - 1].powerW;
  if (powerW < lowest || powerW > highest) {
    throw new ZoneTableRangeError(
      field('powerW'),
      `${prefix}${formatNumber(powerW)} W lies outside the zone table's powers ` +
        `(${rangeText(lowest, highest, 'W')}); the table is not extrapolated.`,
      powerW,
      { lowest, highest },
    );
  }
  const upperIndex = powerRows.findIndex((row) => row.powerW >= powerW);
  const upper = powerRows[upperIndex];
  if (upper.powerW === powerW) {
    return alongTime(upper, timeS, field('timeS'), prefix, powerW);
  }
  const lower = powerRows[upperIndex - 1];
  const fromLower = alongTime(lower, timeS, field('timeS'), prefix, powerW);
  const fromUpper = alongTime(upper, timeS, field('timeS'), prefix, powerW);
  return mix(fromLower, fromUpper, (powerW - lower.powerW) / (upper.powerW - lower.powerW));
}

function groupByPower(table: readonly ZoneTableRow[], field: string, prefix: string): PowerRow[] {
  if (table.length === 0) {
    throw new ZoneTableRangeError(field, `${prefix}the zone table holds no row.`, NaN, null);
  }
  const byPower = new Map<number, ZoneTableRow[]>();
  for (const row of table) {
    const rows = byPower.get(row.powerW) ?? [];
    if (rows.some((other) => other.timeS === row.timeS)) {
      throw new ZoneTableRangeError(
        field,
        `${prefix}the zone table lists ${formatNumber(row.powerW)} W for ` +
          `${formatNumber(row.timeS)} s twice.`,
        row.powerW,
        null,
      );
    }
    rows.push(row);
    byPower.set(row.powerW, rows);
  }
  return [...byPower.entries()]
    .map(([powerW, rows]) => ({ powerW, rows: rows.sort((a, b) => a.timeS - b.timeS) }))
    .sort((a, b) => a.powerW - b.powerW);
}

/** Linear interpolation in time along one power row; refuses a time outside its times. */
function alongTime(
  row: PowerRow,
  timeS: number,
  field: string,
  prefix: string,
  requestedPowerW: number,
): ZoneDimensions {
  const { rows } = row;
  const lowest = rows[0].timeS;
  const highest = rows[rows.length - 1].timeS;
  if (timeS < lowest || timeS > highest) {
    const which =
      row.powerW === requestedPowerW
        ? `at ${formatNumber(row.powerW)} W`
        : `at ${formatNumber(row.powerW)} W, one of the two table powers either side of ` +
          `${formatNumber(requestedPowerW)} W,`;
    throw new ZoneTableRangeError(
      field,
      `${prefix}${formatNumber(timeS)} s lies outside the times the zone table gives ${which} ` +
        `(${rangeText(lowest, highest, 's')}); the table is not extrapolated.`,
      timeS,
      { lowest, highest },
    );
  }
  const upperIndex = rows.findIndex((candidate) => candidate.timeS >= timeS);
  const upper = rows[upperIndex];
  if (upper.timeS === timeS) return dimensionsOf(upper);
  const lower = rows[upperIndex - 1];
  return mix(
    dimensionsOf(lower),
    dimensionsOf(upper),
    (timeS - lower.timeS) / (upper.timeS - lower.timeS),
  );
}

function dimensionsOf(row: ZoneTableRow): ZoneDimensions {
  return {
    zoneLengthMm: row.zoneLengthMm,
    zoneWidthMm: row.zoneWidthMm,
    tipOffsetMm: row.tipOffsetMm,
  };
}

/** (1 − f)·a + f·b for each dimension. */
function mix(a: ZoneDimensions, b: ZoneDimensions, fraction: number): ZoneDimensions {
  const between = (from: number, to: number) => from + (to - from) * fraction;
  return {
    zoneLengthMm: between(a.zoneLengthMm, b.zoneLengthMm),
    zoneWidthMm: between(a.zoneWidthMm, b.zoneWidthMm),
    tipOffsetMm: between(a.tipOffsetMm, b.tipOffsetMm),
  };
}

function rangeText(lowest: number, highest: number, unit: string): string {
  return lowest === highest
    ? `only ${formatNumber(lowest)} ${unit}`
    : `${formatNumber(lowest)}–${formatNumber(highest)} ${unit}`;
}

function formatNumber(value: number): string {
  return Number.isInteger(value) ? String(value) : String(Number(value.toFixed(3)));
}
